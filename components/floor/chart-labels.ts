/** The rig chart's words for time (RigChart.tsx): ticks, its spoken summary and the caption's bucket. */

const DAY_MS = 86_400_000;

/** A tick or summary time: hh:mm for spans up to 2 days, the day and month beyond (a year's chart). */
export function timeLabel(ms: number, spanMs: number): string {
  const d = new Date(ms);
  return spanMs > 2 * DAY_MS
    ? d.toLocaleDateString('en-GB', { day: 'numeric', month: 'short' })
    : d.toLocaleTimeString('en-GB', { hour: '2-digit', minute: '2-digit' });
}

/** A bucket's length for the caption: seconds, minutes or hours (a year's chart has buckets of about a day). */
export function bucketText(ms: number): string {
  const s = Math.max(1, Math.round(ms / 1000));
  if (s < 120) return `${s} s`;
  if (s < 7200) return `${Math.round(s / 60)} min`;
  return `${Math.round(s / 360) / 10} h`;
}
