/**
 * How long each tier of telemetry is kept, and which tier a chart reads (declared once: the
 * server's upkeep, the chart API, the bench's projection and the chart's caption all use these).
 *
 * Tiers: `raw` = every message with its sockets (telemetry_batches, partitioned by day), `minute` =
 * per-minute rollups (telemetry_rollups, partitioned by day), `hour` = hourly rollups
 * (telemetry_hourly, kept for good). The raw window around every trip, alarm and read point is
 * copied to telemetry_kept before its day is dropped, and kept for good.
 */

export type TelemetryTier = 'raw' | 'minute' | 'hour';

/** Days of raw messages kept (EMBERLOT_RAW_KEEP_DAYS). */
export const RAW_KEEP_DAYS = 14;
/** Days of per-minute rollups kept (EMBERLOT_MINUTE_KEEP_DAYS). */
export const MINUTE_KEEP_DAYS = 30;
/** Minutes of raw messages kept for good before and after each trip, alarm and read point (EMBERLOT_KEEP_AROUND_MIN). */
export const KEEP_AROUND_MIN = 5;

/** A chart span up to this reads raw messages. */
export const CHART_RAW_SPAN_MS = 30 * 60_000;
/** A chart span up to this (and over CHART_RAW_SPAN_MS) reads per-minute rollups; longer spans read hourly ones. */
export const CHART_MINUTE_SPAN_MS = 2 * 86_400_000;
/** Longest chart span: a year (366 days, a leap year's). */
export const CHART_MAX_SPAN_MS = 366 * 86_400_000;

export interface TierWindows {
  rawKeepDays: number;
  minuteKeepDays: number;
}

const DAY_MS = 86_400_000;

/**
 * The tier a chart of [from, to] reads: by span (a series never needs more rows than a few
 * thousand), then coarser when `from` is older than the finer tier keeps (its days were dropped).
 */
export function chartTier(fromMs: number, toMs: number, nowMs: number, windows: TierWindows): TelemetryTier {
  const span = toMs - fromMs;
  let tier: TelemetryTier = span <= CHART_RAW_SPAN_MS ? 'raw' : span <= CHART_MINUTE_SPAN_MS ? 'minute' : 'hour';
  // A day partition is dropped once its whole day is older than the window: data from
  // (today − window) on is still there. One day of margin keeps the rule simple and safe.
  const age = nowMs - fromMs;
  if (tier === 'raw' && age > windows.rawKeepDays * DAY_MS) tier = 'minute';
  if (tier === 'minute' && age > windows.minuteKeepDays * DAY_MS) tier = 'hour';
  return tier;
}

/**
 * A chart short enough for raw messages (span up to CHART_RAW_SPAN_MS) whose start is older than the
 * raw window: its day was dropped, and raw messages survive only in the windows kept for good around
 * trips, alarms and read points (telemetry_kept). The chart reads those when the span holds any, and
 * the tier `chartTier` gives otherwise.
 */
export function readsKeptRaw(fromMs: number, toMs: number, nowMs: number, windows: TierWindows): boolean {
  return toMs - fromMs <= CHART_RAW_SPAN_MS && chartTier(fromMs, toMs, nowMs, windows) !== 'raw';
}

/** The chart caption's words for the raw messages kept around trips, alarms and read points. */
export const KEPT_RAW_CAPTION =
  'From every sample kept around trips, alarms and read points (the rest of that day’s raw samples is no longer kept)';

/** The chart caption's words for each tier. */
export const TIER_CAPTION: Record<TelemetryTier, string> = {
  raw: 'From every sample',
  minute: 'From per-minute averages',
  hour: 'From hourly averages',
};
