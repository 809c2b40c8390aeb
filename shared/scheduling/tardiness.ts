/**
 * The calendar proposer: run requests with due dates and priorities placed on the rigs so that the
 * total weighted tardiness Σ w_j·max(0, C_j − d_j) is as small as it can be found (ties: the
 * smaller Σ w_j·C_j, so nothing waits for no reason). C_j is a run's planned end (stress hours,
 * read-point holds and the heating allowance: runDurationMs), d_j its due date (none: never late),
 * w_j the weight of its priority (shared/domain/priority.ts). Hours are stress-clock hours.
 *
 * A schedule is built by the serial schedule-generation scheme: runs are taken in a list order and
 * each goes to a rig at its earliest feasible start around the runs already placed, the fixed ones
 * and maintenance (earliestSlot: the sharing rule of sharing.ts included) [pub: Kolisch, "Serial
 * and parallel resource-constrained project scheduling methods revisited", EJOR 90 (1996) 320–333
 * — from memory].
 *
 * - Exact (≤ EXACT_MAX_JOBS runs): depth-first branch and bound over every order and every rig of
 *   each run. A partial schedule's lower bound is its own weighted tardiness plus, for each run not
 *   yet placed, w·max(0, earliest finish now − d) (placing more runs only delays the others). With
 *   socket and condition constraints the schedules so built contain an optimum of a regular
 *   objective such as ΣwT [Sprecher, Kolisch & Drexl, EJOR 80 (1995) 94–102, active schedules —
 *   from memory]; the read-point-hold clause of the sharing rule is not monotone, so there the
 *   optimum is over the schedules the scheme builds. Stops at EXACT_NODE_BUDGET placements and then
 *   answers with the heuristic.
 * - Heuristic (more runs): the Apparent Tardiness Cost rule [pub: Vepsäläinen & Morton, "Priority
 *   rules for job shops with weighted tardiness costs", Management Science 33(8) (1987) 1035–1047]:
 *   at the time t the next run could start, take the run with the largest
 *   (w/p)·exp(−max(d − p − t, 0)/(K·p̄)); K from the due-date range R = (d_max − d_min)/C_max as
 *   K = 4.5 + R (R ≤ 0.5) else 6 − 2R (Pinedo, *Scheduling*, §14.2 — from memory), and a few fixed
 *   K, EDD and WSPT lists as starts; the best list then improved by swapping and moving runs in it
 *   while the objective drops (pairwise-interchange local search, common practice).
 * The gap between the two on generated cases is measured in tests/unit/tardiness.test.ts: 120
 * fleets of 1–3 rigs and 3–7 runs (seed 2612), the optimum above 0 in 78; the heuristic matched
 * the exact optimum in 119, and the one miss was 1.95 % of Σ w·p (asserted ≤ 5 %).
 */
import {
  DEFAULT_TIMING,
  earliestSlot,
  runDurationMs,
  rigRefusals,
  type Commitment,
  type MaintenanceWindow,
  type RigCapability,
  type TimingOptions,
} from './constraints';
import type { Assignment, Job } from './heuristic';
import { tardinessMs } from './lateness';
import { holdWindows } from './sharing';

/** Up to this many runs the proposer searches exhaustively (branch and bound). */
export const EXACT_MAX_JOBS = 7;
/** Placements the exact search may try before it gives up and answers with the heuristic. */
export const EXACT_NODE_BUDGET = 200_000;
/** Decodes the local search may spend. */
const LOCAL_SEARCH_BUDGET = 4_000;

export interface DueJob extends Job {
  /** Due date (null: none, never late). */
  dueMs: number | null;
  /** Weight in Σ w·T (the priority's weight). */
  weight: number;
}

export interface CalendarAssignment extends Assignment {
  dueMs: number | null;
  weight: number;
  /** Clock hours past the due date (0 when on time). */
  tardinessH: number;
}

export interface CalendarPlan {
  assignments: CalendarAssignment[];
  unplaced: Array<{ jobId: string; code: string; reasons: string[] }>;
  /** Σ w·max(0, C − d) in weighted clock hours. */
  weightedTardinessH: number;
  /** Σ w·(C − notBefore) in weighted clock hours (the tie-break). */
  weightedFlowH: number;
  method: 'exact' | 'heuristic';
  /** Placements tried by the exact search (0 when it did not run). */
  nodes: number;
}

interface Ctx {
  rigs: readonly RigCapability[];
  fixed: readonly Commitment[];
  maintenance: readonly MaintenanceWindow[];
  notBeforeMs: number;
  timing: TimingOptions;
}

interface Placed {
  job: DueJob;
  rig: RigCapability;
  startMs: number;
  endMs: number;
}

const allowedRigs = (job: DueJob, c: Ctx) =>
  (job.rigIds ? c.rigs.filter((r) => job.rigIds!.includes(r.id)) : c.rigs).filter((r) => !rigRefusals(r, job).length);

function commitmentOf(p: Placed, t: TimingOptions): Commitment {
  return {
    runId: p.job.id,
    code: p.job.code,
    rigId: p.rig.id,
    startMs: p.startMs,
    endMs: p.endMs,
    chamberC: p.job.chamberC,
    humidityPct: p.job.humidityPct,
    sockets: p.job.sampleSize,
    holds: holdWindows(p.startMs, p.job, t),
  };
}

/** Earliest-finish placement of a job on each allowed rig around `placed` (best first). */
function placements(job: DueJob, c: Ctx, placed: readonly Commitment[]): Placed[] {
  const out: Placed[] = [];
  for (const rig of allowedRigs(job, c)) {
    const slot = earliestSlot(rig, job, c.notBeforeMs, placed, c.maintenance, c.timing);
    if (slot) out.push({ job, rig, startMs: slot.startMs, endMs: slot.endMs });
  }
  return out.sort((a, b) => a.endMs - b.endMs || a.rig.socketCount - b.rig.socketCount || a.rig.code.localeCompare(b.rig.code));
}

const wT = (p: Placed, msPerH: number) => (p.job.weight * tardinessMs(p.endMs, p.job.dueMs)) / msPerH;
const wC = (p: Placed, c: Ctx) => (p.job.weight * (p.endMs - c.notBeforeMs)) / c.timing.msPerClockH;

interface Scored {
  placed: Placed[];
  t: number;
  f: number;
}

/** Serial generation: each job of the list at its earliest-finish rig. */
function decode(order: readonly DueJob[], c: Ctx): Scored {
  const commits: Commitment[] = [...c.fixed];
  const placed: Placed[] = [];
  let t = 0;
  let f = 0;
  for (const job of order) {
    const best = placements(job, c, commits)[0];
    if (!best) continue;
    placed.push(best);
    commits.push(commitmentOf(best, c.timing));
    t += wT(best, c.timing.msPerClockH);
    f += wC(best, c);
  }
  return { placed, t, f };
}

const EPS = 1e-9;
const better = (a: { t: number; f: number }, b: { t: number; f: number }) =>
  a.t < b.t - EPS || (Math.abs(a.t - b.t) <= EPS && a.f < b.f - EPS);

/** The ATC list: at each step the run with the largest apparent tardiness cost at the time it could start. */
export function atcOrder(jobs: readonly DueJob[], c: Ctx, k: number): DueJob[] {
  const left = [...jobs];
  const order: DueJob[] = [];
  const commits: Commitment[] = [...c.fixed];
  while (left.length) {
    const opts = left.map((j) => ({ j, p: placements(j, c, commits)[0] }));
    const can = opts.filter((o) => o.p);
    if (!can.length) {
      order.push(...left);
      break;
    }
    const t = Math.min(...can.map((o) => o.p!.startMs));
    const pBar = can.reduce((s, o) => s + runDurationMs(o.j, c.timing), 0) / can.length;
    let best = can[0];
    let bestI = -1;
    for (const o of can) {
      const p = runDurationMs(o.j, c.timing);
      const slack = o.j.dueMs === null ? Number.POSITIVE_INFINITY : Math.max(o.j.dueMs - p - t, 0);
      const index = (o.j.weight / p) * Math.exp(-slack / (k * pBar));
      // Ties (e.g. every run without a due date): the larger w/p, then the code.
      if (
        index > bestI + EPS ||
        (Math.abs(index - bestI) <= EPS && o.j.weight / p > best.j.weight / runDurationMs(best.j, c.timing) + EPS)
      ) {
        best = o;
        bestI = index;
      }
    }
    order.push(best.j);
    left.splice(left.indexOf(best.j), 1);
    commits.push(commitmentOf(best.p!, c.timing));
  }
  return order;
}

/** K of the ATC rule from the due-date range (Pinedo §14.2, from memory). */
export function atcK(jobs: readonly DueJob[], c: Ctx): number {
  const dues = jobs.map((j) => j.dueMs).filter((d): d is number => d !== null);
  const cmax = jobs.reduce((s, j) => s + runDurationMs(j, c.timing), 0) / Math.max(1, c.rigs.length);
  if (dues.length < 2 || cmax <= 0) return 2;
  const r = (Math.max(...dues) - Math.min(...dues)) / cmax;
  return r <= 0.5 ? 4.5 + r : Math.max(0.5, 6 - 2 * r);
}

function byCode(a: DueJob, b: DueJob) {
  return a.code.localeCompare(b.code);
}

/** A run's window as booked now (the calendar's current bookings). */
export interface CurrentWindow {
  jobId: string;
  rigId: string;
  startMs: number;
  endMs: number;
}

/**
 * The bookings as they stand, scored like a decoded list, with their order (by start); null unless
 * every job has a window that could be proposed: on a rig it may use, not before notBefore, as long
 * as the run, and free under the booking rule (rigRefusals) given the fixed runs and the others.
 */
export function currentSchedule(jobs: readonly DueJob[], current: readonly CurrentWindow[], c: Ctx): (Scored & { order: DueJob[] }) | null {
  const byJob = new Map(current.map((w) => [w.jobId, w]));
  const placed: Placed[] = [];
  for (const job of jobs) {
    const w = byJob.get(job.id);
    const rig = w && allowedRigs(job, c).find((r) => r.id === w.rigId);
    if (!w || !rig || w.startMs < c.notBeforeMs || w.endMs - w.startMs < runDurationMs(job, c.timing)) return null;
    placed.push({ job, rig, startMs: w.startMs, endMs: w.endMs });
  }
  for (const p of placed) {
    const others = [...c.fixed, ...placed.filter((q) => q !== p).map((q) => commitmentOf(q, c.timing))];
    const window = { startMs: p.startMs, endMs: p.endMs, commitments: others, maintenance: c.maintenance, timing: c.timing };
    if (rigRefusals(p.rig, p.job, window, 'window').length) return null;
  }
  placed.sort((a, b) => a.startMs - b.startMs || byCode(a.job, b.job));
  return {
    placed,
    t: placed.reduce((s, p) => s + wT(p, c.timing.msPerClockH), 0),
    f: placed.reduce((s, p) => s + wC(p, c), 0),
    order: placed.map((p) => p.job),
  };
}

/**
 * ATC starts + pairwise-interchange and insertion local search. Given the bookings as they stand
 * (`incumbent`), the search starts from them unless a start list decodes better: the answer is
 * never worse than the current bookings, by construction.
 */
export function heuristicSchedule(
  jobs: readonly DueJob[],
  c: Ctx,
  incumbent: (Scored & { order: DueJob[] }) | null = null,
): Scored & { order: DueJob[] } {
  const edd = [...jobs].sort((a, b) => (a.dueMs ?? Infinity) - (b.dueMs ?? Infinity) || byCode(a, b));
  const wspt = [...jobs].sort((a, b) => b.weight / runDurationMs(b, c.timing) - a.weight / runDurationMs(a, c.timing) || byCode(a, b));
  const starts = [edd, wspt, ...[atcK(jobs, c), 0.5, 1, 2, 4].map((k) => atcOrder(jobs, c, k))];
  let order = starts[0];
  let best = decode(order, c);
  for (const s of starts.slice(1)) {
    const d = decode(s, c);
    if (better(d, best)) {
      best = d;
      order = s;
    }
  }
  if (incumbent && !better(best, incumbent)) {
    best = incumbent;
    order = incumbent.order;
  }
  let budget = LOCAL_SEARCH_BUDGET;
  let improved = true;
  while (improved && budget > 0) {
    improved = false;
    for (let i = 0; i < order.length && budget > 0; i++) {
      for (let j = 0; j < order.length && budget > 0; j++) {
        if (i === j) continue;
        // Swap i and j, then move i to j: keep whichever improves.
        const swapped = [...order];
        [swapped[i], swapped[j]] = [swapped[j], swapped[i]];
        const moved = [...order];
        moved.splice(j, 0, ...moved.splice(i, 1));
        for (const cand of [swapped, moved]) {
          budget--;
          const d = decode(cand, c);
          if (better(d, best)) {
            best = d;
            order = cand;
            improved = true;
          }
        }
      }
    }
  }
  return { ...best, order };
}

/** Branch and bound over every order × rig (serial generation); null when the budget ran out. */
export function exactSchedule(jobs: readonly DueJob[], c: Ctx, upper: Scored): { best: Scored; nodes: number } | null {
  let best = upper;
  let nodes = 0;
  const commits: Commitment[] = [...c.fixed];
  const placed: Placed[] = [];
  const left = new Set(jobs);
  let aborted = false;
  const visit = (t: number, f: number): void => {
    if (aborted) return;
    if (!left.size) {
      if (better({ t, f }, best)) best = { placed: [...placed], t, f };
      return;
    }
    const children: Placed[] = [];
    let lbT = t;
    let lbF = f;
    for (const j of left) {
      const ps = placements(j, c, commits);
      nodes += ps.length;
      if (!ps.length) continue; // no rig can ever take it: it stays unplaced in every schedule
      lbT += wT(ps[0], c.timing.msPerClockH);
      lbF += wC(ps[0], c);
      children.push(...ps);
    }
    if (nodes > EXACT_NODE_BUDGET) {
      aborted = true;
      return;
    }
    if (!children.length) {
      if (better({ t, f }, best)) best = { placed: [...placed], t, f };
      return;
    }
    if (!better({ t: lbT, f: lbF }, best)) return;
    children.sort((a, b) => a.endMs - b.endMs);
    for (const p of children) {
      left.delete(p.job);
      placed.push(p);
      commits.push(commitmentOf(p, c.timing));
      visit(t + wT(p, c.timing.msPerClockH), f + wC(p, c));
      commits.pop();
      placed.pop();
      left.add(p.job);
      if (aborted) return;
    }
  };
  visit(0, 0);
  return aborted ? null : { best, nodes };
}

/**
 * Place `jobs` around the fixed commitments and maintenance, minimising Σ w·T (then Σ w·C): exact
 * up to EXACT_MAX_JOBS runs (within the node budget), the ATC heuristic with local search above.
 * `current`: the jobs' windows as booked; when they keep the booking rule, the search starts from
 * them, so the plan is never worse than the bookings as they stand.
 */
export function planCalendar(
  jobs: readonly DueJob[],
  rigs: readonly RigCapability[],
  fixed: readonly Commitment[],
  maintenance: readonly MaintenanceWindow[],
  notBeforeMs: number,
  timing: TimingOptions = DEFAULT_TIMING,
  opts: { exactMaxJobs?: number; forceHeuristic?: boolean; current?: readonly CurrentWindow[] } = {},
): CalendarPlan {
  const c: Ctx = { rigs, fixed, maintenance, notBeforeMs, timing };
  const sorted = [...jobs].sort(byCode);
  const placeable = sorted.filter((j) => allowedRigs(j, c).length);
  const unplaced = sorted
    .filter((j) => !allowedRigs(j, c).length)
    .map((j) => ({
      jobId: j.id,
      code: j.code,
      reasons: (j.rigIds ? rigs.filter((r) => j.rigIds!.includes(r.id)) : rigs).flatMap((r) => rigRefusals(r, j)),
    }));
  // The bookings as they stand seed the search (and bound the exact one): never a worse proposal.
  const incumbent = opts.current && placeable.length === sorted.length ? currentSchedule(placeable, opts.current, c) : null;
  const heur = heuristicSchedule(placeable, c, incumbent);
  let result: Scored = heur;
  let method: CalendarPlan['method'] = 'heuristic';
  let nodes = 0;
  if (!opts.forceHeuristic && placeable.length <= (opts.exactMaxJobs ?? EXACT_MAX_JOBS)) {
    const ex = exactSchedule(placeable, c, heur);
    if (ex) {
      result = ex.best;
      method = 'exact';
      nodes = ex.nodes;
    }
  }
  const msPerH = timing.msPerClockH;
  const assignments = [...result.placed]
    .sort((a, b) => a.startMs - b.startMs || a.job.code.localeCompare(b.job.code))
    .map((p) => ({
      jobId: p.job.id,
      code: p.job.code,
      rigId: p.rig.id,
      rigCode: p.rig.code,
      startMs: p.startMs,
      endMs: p.endMs,
      dueMs: p.job.dueMs,
      weight: p.job.weight,
      tardinessH: tardinessMs(p.endMs, p.job.dueMs) / msPerH,
    }));
  return { assignments, unplaced, weightedTardinessH: result.t, weightedFlowH: result.f, method, nodes };
}

/** Σ w·T of given windows (e.g. the bookings as they stand), weighted clock hours. */
export function weightedTardinessH(
  items: ReadonlyArray<{ endMs: number; dueMs: number | null; weight: number }>,
  msPerClockH: number,
): number {
  return items.reduce((s, x) => s + (x.weight * tardinessMs(x.endMs, x.dueMs)) / msPerClockH, 0);
}
