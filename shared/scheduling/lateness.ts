/**
 * Lateness against a due date, in stress-clock hours (the demo clock is accelerated; on a real
 * rig one clock hour is one wall hour). L = C − d, tardiness T = max(0, L) (Pinedo, *Scheduling:
 * Theory, Algorithms, and Systems*, ch. 1 notation — from memory).
 */
export function tardinessMs(endMs: number, dueMs: number | null): number {
  return dueMs === null ? 0 : Math.max(0, endMs - dueMs);
}

/** Lateness L = C − d in hours of `msPerH` ms (negative: early), unrounded; null without a due date. */
export function latenessH(endMs: number, dueMs: number, msPerH: number): number;
export function latenessH(endMs: number, dueMs: number | null, msPerH: number): number | null;
export function latenessH(endMs: number, dueMs: number | null, msPerH: number): number | null {
  return dueMs === null ? null : (endMs - dueMs) / msPerH;
}

/** Clock hours past the due date (0 when on time): the tardiness max(0, L), rounded to 0.1 h; null without a due date. */
export function lateH(endMs: number, dueMs: number | null, msPerClockH: number): number | null {
  const l = latenessH(endMs, dueMs, msPerClockH);
  return l === null ? null : Math.round(Math.max(0, l) * 10) / 10;
}
