/**
 * Rig utilisation per week, in socket-hours, from what the database stores (issue #26 item 4).
 * Pure: times are epoch ms; `msPerClockH` turns them into hours (the API uses wall hours: a
 * credited stress hour is a wall hour on a real rig).
 *
 * Definitions (Emberlot's own; the screen and the CSV say the same words, UTILISATION_DEFINITIONS):
 * - A run's window on its rig starts at its booked start (or its actual start, if earlier) and
 *   ends when it finished or was aborted, else at its booked end — never after `nowMs`: the figures
 *   are what happened, not what is planned.
 * - booked   = the run's sample size × the part of its window inside the week.
 * - lost     = socket-hours the run could not stress because of a fault: every socket while the run
 *              was in the `fault` state, plus each tripped socket from its trip to the window's end
 *              (outside fault time, so nothing counts twice).
 * - stressed = the run's credited socket-hours (Σ run_sockets.accrued_hours), spread over the weeks
 *              in proportion to the time the run spent in `stressing` in each; never more than
 *              booked − lost in a week (credit is earned on the rig's clock, state times are the
 *              server's, so the two can disagree by a sample or so).
 * - idle     = booked − stressed − lost: heating, read-point holds, cooling, loading, paused, booked
 *              but not started, and stress time the accrual did not credit (out of band, gaps).
 * So booked = stressed + idle + lost in every row, by construction (tests/unit/utilisation.test.ts).
 */

export type Interval = readonly [number, number];

/** What one run contributes, read from the database. */
export interface RunUsage {
  rigId: string;
  sockets: number;
  windowStartMs: number;
  windowEndMs: number;
  /** Intervals in the `stressing` state. */
  stressing: readonly Interval[];
  /** Intervals in the `fault` state. */
  faults: readonly Interval[];
  /** Trip times, one per tripped socket. */
  trips: readonly number[];
  /** Σ credited hours over the run's sockets (stress-clock hours). */
  creditedSocketH: number;
}

export interface UsageRow {
  rigId: string;
  weekStartMs: number;
  bookedSh: number;
  stressedSh: number;
  idleSh: number;
  lostSh: number;
}

export const WEEK_MS = 7 * 24 * 3_600_000;

/** Monday 00:00 UTC of the week holding `ms` (ISO 8601 weeks start on Monday). */
export function weekStartMs(ms: number): number {
  const d = new Date(ms);
  const day = (d.getUTCDay() + 6) % 7; // Monday 0 … Sunday 6
  return Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate()) - day * 24 * 3_600_000;
}

/** Length of the part of `a` inside `b`. */
export function overlapMs(a: Interval, b: Interval): number {
  return Math.max(0, Math.min(a[1], b[1]) - Math.max(a[0], b[0]));
}

/** `a` minus every interval of `cut` (the cuts may overlap each other). */
export function subtractIntervals(a: Interval, cut: readonly Interval[]): Interval[] {
  let parts: Interval[] = [a];
  for (const c of cut) {
    const next: Interval[] = [];
    for (const p of parts) {
      if (c[1] <= p[0] || c[0] >= p[1]) next.push(p);
      else {
        if (c[0] > p[0]) next.push([p[0], c[0]]);
        if (c[1] < p[1]) next.push([c[1], p[1]]);
      }
    }
    parts = next;
  }
  return parts;
}

const sumOverlap = (list: readonly Interval[], w: Interval) => list.reduce((s, x) => s + overlapMs(x, w), 0);

/** One run's rows for the given weeks (weeks it does not touch are left out). */
export function runUsageByWeek(run: RunUsage, weekStarts: readonly number[], msPerClockH: number, nowMs: number): UsageRow[] {
  const end = Math.min(run.windowEndMs, nowMs);
  if (!(end > run.windowStartMs) || run.sockets <= 0) return [];
  const window: Interval = [run.windowStartMs, end];
  const clip = (x: Interval): Interval => [Math.max(x[0], window[0]), Math.min(x[1], window[1])];
  const faults = run.faults.map(clip).filter((x) => x[1] > x[0]);
  const stressing = run.stressing.map(clip).filter((x) => x[1] > x[0]);
  const tripLost = run.trips.flatMap((t) => (t < end ? subtractIntervals([Math.max(t, window[0]), end], faults) : []));
  const stressTotal = stressing.reduce((s, x) => s + (x[1] - x[0]), 0);
  const rows: UsageRow[] = [];
  for (const ws of weekStarts) {
    const w: Interval = [ws, ws + WEEK_MS];
    const inWeek = overlapMs(window, w);
    if (inWeek <= 0) continue;
    const bookedSh = (run.sockets * inWeek) / msPerClockH;
    const lostSh = Math.min(bookedSh, (run.sockets * sumOverlap(faults, w) + sumOverlap(tripLost, w)) / msPerClockH);
    const share = stressTotal > 0 ? sumOverlap(stressing, w) / stressTotal : 0;
    const stressedSh = Math.min(Math.max(0, run.creditedSocketH * share), bookedSh - lostSh);
    rows.push({ rigId: run.rigId, weekStartMs: ws, bookedSh, stressedSh, lostSh, idleSh: bookedSh - stressedSh - lostSh });
  }
  return rows;
}

/** Every run's rows summed per (rig, week); every rig × week in the range gets a row (zeros when unused). */
export function utilisationByRigWeek(
  runs: readonly RunUsage[],
  rigIds: readonly string[],
  weekStarts: readonly number[],
  msPerClockH: number,
  nowMs: number,
): UsageRow[] {
  const key = (rig: string, ws: number) => `${rig}|${ws}`;
  const out = new Map<string, UsageRow>();
  for (const rigId of rigIds)
    for (const ws of weekStarts) out.set(key(rigId, ws), { rigId, weekStartMs: ws, bookedSh: 0, stressedSh: 0, idleSh: 0, lostSh: 0 });
  for (const run of runs) {
    for (const r of runUsageByWeek(run, weekStarts, msPerClockH, nowMs)) {
      const row = out.get(key(r.rigId, r.weekStartMs));
      if (!row) continue;
      row.bookedSh += r.bookedSh;
      row.stressedSh += r.stressedSh;
      row.lostSh += r.lostSh;
      row.idleSh += r.idleSh;
    }
  }
  return [...out.values()];
}

/**
 * A run's time in each state from its ordered transitions (`to` at `atMs`); the last state lasts
 * until `endMs`. Returns the intervals of the states asked for.
 */
export function stateIntervals(transitions: ReadonlyArray<{ atMs: number; to: string }>, endMs: number, state: string): Interval[] {
  const out: Interval[] = [];
  for (let i = 0; i < transitions.length; i++) {
    if (transitions[i].to !== state) continue;
    const until = i + 1 < transitions.length ? transitions[i + 1].atMs : endMs;
    if (until > transitions[i].atMs) out.push([transitions[i].atMs, until]);
  }
  return out;
}

/** The median (the mean of the middle two for an even count); null for none. Common practice. */
export function median(values: readonly number[]): number | null {
  if (!values.length) return null;
  const s = [...values].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid] : (s[mid - 1] + s[mid]) / 2;
}

/** The definitions as the screen and the CSV state them. */
export const UTILISATION_DEFINITIONS = {
  booked:
    "Booked: sample size × hours of the run's window on the rig (booked or actual start to finish, abort or booked end; never past now).",
  stressed:
    "Stressed: the run's credited socket-hours (accrued hours of its sockets), spread over the weeks by the time it spent stressing; at most booked − lost.",
  lost: 'Lost to faults: every socket while the run was in fault, plus each tripped socket from its trip to the end of the window.',
  idle: 'Idle: booked − stressed − lost (heating, read-point holds, cooling, loading, paused, and stress time not credited).',
  turnaround:
    'Turnaround: from the first booking of a lot (the run request) to the first signature of its verdict; the median over lots signed in the period.',
  hours:
    'Hours are wall-clock hours; a credited stress hour counts as one (on an accelerated demo clock, stressed is capped at booked − lost).',
} as const;
