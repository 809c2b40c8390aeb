/** The rig chart's words for time (RigChart.tsx): ticks, its spoken summary and the caption's bucket. */
import { formatLocalDate, formatLocalTime } from '@/shared/domain/format';

const DAY_MS = 86_400_000;

/** A tick or summary time: hh:mm for spans up to 2 days, the date beyond (a year's chart) — the one date style of shared/domain/format.ts. */
export function timeLabel(ms: number, spanMs: number): string {
  return spanMs > 2 * DAY_MS ? formatLocalDate(ms) : formatLocalTime(ms);
}

/** A bucket's length for the caption: seconds, minutes or hours (a year's chart has buckets of about a day). */
export function bucketText(ms: number): string {
  const s = Math.max(1, Math.round(ms / 1000));
  if (s < 120) return `${s} s`;
  if (s < 7200) return `${Math.round(s / 60)} min`;
  return `${Math.round(s / 360) / 10} h`;
}
