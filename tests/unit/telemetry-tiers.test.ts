/**
 * Which tier a chart reads (shared/domain/telemetry-tiers.ts `chartTier`), at its boundaries. The
 * spans are the product's own rule (issue #24: raw for short spans, per-minute then hourly rollups
 * as spans grow, so a series never reads more than a few thousand rows); reading the coarser tier
 * once the finer one's days are gone is common practice for tiered time-series storage.
 */
import {
  CHART_MINUTE_SPAN_MS,
  CHART_RAW_SPAN_MS,
  chartTier,
  MINUTE_KEEP_DAYS,
  RAW_KEEP_DAYS,
  readsKeptRaw,
} from '../../shared/domain/telemetry-tiers';

const DAY = 86_400_000;
const now = Date.UTC(2026, 11, 4, 12, 0, 0);
const w = { rawKeepDays: RAW_KEEP_DAYS, minuteKeepDays: MINUTE_KEEP_DAYS };
const span = (ms: number) => chartTier(now - ms, now, now, w);

test('by span: raw up to 30 minutes, per-minute up to 2 days, hourly beyond', () => {
  expect(CHART_RAW_SPAN_MS).toBe(30 * 60_000);
  expect(CHART_MINUTE_SPAN_MS).toBe(2 * DAY);
  expect([span(60_000), span(CHART_RAW_SPAN_MS), span(CHART_RAW_SPAN_MS + 1)]).toEqual(['raw', 'raw', 'minute']);
  expect([span(3_600_000), span(CHART_MINUTE_SPAN_MS), span(CHART_MINUTE_SPAN_MS + 1)]).toEqual(['minute', 'minute', 'hour']);
  expect([span(30 * DAY), span(366 * DAY)]).toEqual(['hour', 'hour']);
});

test('a span starting before a tier’s window reads the next coarser tier', () => {
  expect([RAW_KEEP_DAYS, MINUTE_KEEP_DAYS]).toEqual([14, 30]);
  const at = (ageMs: number, spanMs: number) => chartTier(now - ageMs, now - ageMs + spanMs, now, w);
  expect(at(14 * DAY, 60_000)).toBe('raw');
  expect(at(14 * DAY + 1, 60_000)).toBe('minute');
  expect(at(30 * DAY, 60_000)).toBe('minute');
  expect(at(30 * DAY + 1, 60_000)).toBe('hour');
  expect(at(30 * DAY + 1, 3_600_000)).toBe('hour');
  // Configured windows count, not the defaults.
  expect(chartTier(now - 3 * DAY, now - 3 * DAY + 60_000, now, { rawKeepDays: 2, minuteKeepDays: 5 })).toBe('minute');
  expect(chartTier(now - 6 * DAY, now - 6 * DAY + 60_000, now, { rawKeepDays: 2, minuteKeepDays: 5 })).toBe('hour');
});

test('a raw-span chart past the raw window asks for the raw messages kept around events; longer spans and recent ones do not', () => {
  const kept = (ageMs: number, spanMs: number) => readsKeptRaw(now - ageMs, now - ageMs + spanMs, now, w);
  expect(kept(14 * DAY, 60_000)).toBe(false); // raw day still there
  expect(kept(14 * DAY + 1, 60_000)).toBe(true);
  expect(kept(40 * DAY, CHART_RAW_SPAN_MS)).toBe(true); // kept for good, past the minute window too
  expect(kept(20 * DAY, CHART_RAW_SPAN_MS + 1)).toBe(false); // a span for rollups
  expect(kept(0, 60_000)).toBe(false);
});
