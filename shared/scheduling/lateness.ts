/**
 * Lateness against a due date, in stress-clock hours (the demo clock is accelerated; on a real
 * rig one clock hour is one wall hour). L = C − d, tardiness T = max(0, L) (Pinedo, *Scheduling:
 * Theory, Algorithms, and Systems*, ch. 1 notation — from memory).
 */
export function tardinessMs(endMs: number, dueMs: number | null): number {
  return dueMs === null ? 0 : Math.max(0, endMs - dueMs);
}

/** Clock hours past the due date (0 when on time), rounded to 0.1 h; null without a due date. */
export function lateH(endMs: number, dueMs: number | null, msPerClockH: number): number | null {
  if (dueMs === null) return null;
  return Math.round((tardinessMs(endMs, dueMs) / msPerClockH) * 10) / 10;
}
