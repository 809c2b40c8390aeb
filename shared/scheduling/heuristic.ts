/**
 * Booking heuristic: list scheduling in longest-processing-time-first order (LPT). Each run, longest
 * first, goes to the rig where it FINISHES earliest (its earliest feasible start on that rig plus
 * its length), ties broken by the tighter board (fewest spare sockets), then by rig code. LPT is a
 * classic bound for the makespan on parallel machines (within 4/3 of optimal on identical ones);
 * small cases are optimal (see tests/unit/scheduling.test.ts).
 */
import {
  DEFAULT_TIMING,
  earliestSlot,
  runDurationH,
  rigRefusals,
  type Commitment,
  type MaintenanceWindow,
  type RigCapability,
  type RunNeeds,
  type TimingOptions,
} from './constraints';
import { holdWindows } from './sharing';

export interface Job extends RunNeeds {
  id: string;
  code: string;
  /** Rigs this job may use (e.g. online ones); default every rig. */
  rigIds?: string[];
}

export interface RigOption {
  rigId: string;
  rigCode: string;
  startMs: number;
  endMs: number;
  durationH: number;
  spareSockets: number;
  delayReasons: string[];
}

export interface RigRefusal {
  rigId: string;
  rigCode: string;
  reasons: string[];
}

export interface Proposal {
  options: RigOption[];
  refusals: RigRefusal[];
}

function better(a: RigOption, b: RigOption): number {
  return a.endMs - b.endMs || a.spareSockets - b.spareSockets || a.rigCode.localeCompare(b.rigCode);
}

/** Every rig: a ranked option (earliest finish first) or a refusal with its reasons. */
export function proposeRigs(
  job: RunNeeds,
  rigs: readonly RigCapability[],
  commitments: readonly Commitment[],
  maintenance: readonly MaintenanceWindow[],
  notBeforeMs: number,
  timing: TimingOptions = DEFAULT_TIMING,
): Proposal {
  const options: RigOption[] = [];
  const refusals: RigRefusal[] = [];
  for (const rig of rigs) {
    const reasons = rigRefusals(rig, job);
    if (reasons.length) {
      refusals.push({ rigId: rig.id, rigCode: rig.code, reasons });
      continue;
    }
    const slot = earliestSlot(rig, job, notBeforeMs, commitments, maintenance, timing);
    if (!slot) continue;
    options.push({
      rigId: rig.id,
      rigCode: rig.code,
      startMs: slot.startMs,
      endMs: slot.endMs,
      durationH: runDurationH(job, timing),
      spareSockets: rig.socketCount - job.sampleSize,
      delayReasons: slot.delayReasons,
    });
  }
  options.sort(better);
  refusals.sort((a, b) => a.rigCode.localeCompare(b.rigCode));
  return { options, refusals };
}

export interface Assignment {
  jobId: string;
  code: string;
  rigId: string;
  rigCode: string;
  startMs: number;
  endMs: number;
}

export interface Plan {
  assignments: Assignment[];
  /** Jobs no rig can take, with every rig's reasons. */
  unplaced: Array<{ jobId: string; code: string; reasons: string[] }>;
  /** Latest finish of the placed jobs (notBeforeMs when none). */
  makespanEndMs: number;
}

/**
 * LPT list scheduling of `jobs` around the fixed commitments (running runs) and maintenance.
 * Deterministic: equal lengths are taken in code order.
 */
export function planSchedule(
  jobs: readonly Job[],
  rigs: readonly RigCapability[],
  fixed: readonly Commitment[],
  maintenance: readonly MaintenanceWindow[],
  notBeforeMs: number,
  timing: TimingOptions = DEFAULT_TIMING,
): Plan {
  const order = [...jobs].sort((a, b) => runDurationH(b, timing) - runDurationH(a, timing) || a.code.localeCompare(b.code));
  const placed: Commitment[] = [...fixed];
  const assignments: Assignment[] = [];
  const unplaced: Plan['unplaced'] = [];
  for (const job of order) {
    const allowed = job.rigIds ? rigs.filter((r) => job.rigIds!.includes(r.id)) : rigs;
    const p = proposeRigs(job, allowed, placed, maintenance, notBeforeMs, timing);
    const best = p.options[0];
    if (!best) {
      unplaced.push({ jobId: job.id, code: job.code, reasons: p.refusals.flatMap((r) => r.reasons) });
      continue;
    }
    assignments.push({ jobId: job.id, code: job.code, rigId: best.rigId, rigCode: best.rigCode, startMs: best.startMs, endMs: best.endMs });
    placed.push({
      runId: job.id,
      code: job.code,
      rigId: best.rigId,
      startMs: best.startMs,
      endMs: best.endMs,
      chamberC: job.chamberC,
      humidityPct: job.humidityPct,
      sockets: job.sampleSize,
      holds: holdWindows(best.startMs, job, timing),
    });
  }
  const makespanEndMs = assignments.reduce((m, a) => Math.max(m, a.endMs), notBeforeMs);
  return { assignments, unplaced, makespanEndMs };
}
