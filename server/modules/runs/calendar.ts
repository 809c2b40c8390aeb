/**
 * The calendar: every booked run (not yet loaded) re-placed to minimise the priority-weighted
 * lateness Σ w·max(0, C − d) around the runs already on rigs and maintenance
 * (shared/scheduling/tardiness.ts), and accepting such a proposal. Accepting re-checks every new
 * window with the booking rule itself (rigRefusals, shared/scheduling/constraints.ts) against the
 * runs as they stand then, all or nothing; a run changed since the proposal is refused by its
 * rowVersion.
 */
import { In, type EntityManager } from 'typeorm';
import {
  lateH,
  planBiasV,
  planCalendar,
  rigRefusals,
  runDurationMs,
  holdWindows,
  weightedTardinessH,
  when,
  type Commitment,
  type DueJob,
  type RunNeeds,
  type TimingOptions,
} from '../../../shared/scheduling';
import { chamberSetpointC } from '../../../shared/domain/standards';
import { priorityWeight } from '../../../shared/domain/priority';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { CalendarApplyInput, CalendarApplyResult, CalendarProposal } from '../../../shared/schemas/runs';
import type { AppContext } from '../../context';
import { RigEntity, RunEntity, type StressPlanEntity } from '../../db/entities';
import { conflict } from '../../http/errors';
import { loadSchedulingInputs } from './scheduling-data';
import { advisoryXactLock } from './runs.data';

/** The lock bookings take (runs.service BOOKING_LOCK): moves and bookings never interleave. */
export const CALENDAR_LOCK = 478_001;

const needsOf = (plan: StressPlanEntity, sampleSize: number): RunNeeds => ({
  chamberC: chamberSetpointC(plan.chamberC, plan.chamberBand),
  humidityPct: plan.humidityPct,
  biasV: planBiasV(plan),
  sampleSize,
  durationH: plan.durationH,
  readPointsH: plan.readPointsH,
});

export async function calendarProposal(ctx: AppContext, t: TimingOptions): Promise<CalendarProposal> {
  const m = ctx.ds.manager;
  const nowMs = ctx.now().getTime();
  const inputs = await loadSchedulingInputs(m, nowMs, t);
  const booked = inputs.runs.filter((r) => r.state === 'booked').sort((a, b) => a.code.localeCompare(b.code));
  const ids = new Set(booked.map((r) => r.id));
  const fixed = inputs.commitments.filter((c) => !ids.has(c.runId));
  const current = new Map(inputs.commitments.filter((c) => ids.has(c.runId)).map((c) => [c.runId, c]));
  const jobs: DueJob[] = booked.map((r) => ({
    ...needsOf(inputs.plans.get(r.planId)!, r.sampleSize),
    id: r.id,
    code: r.code,
    // Offline rigs take no new run, except the one the run already holds (as re-planning does).
    rigIds: inputs.rigs.filter((g) => g.online || g.id === r.rigId).map((g) => g.id),
    dueMs: r.dueAt?.getTime() ?? null,
    weight: priorityWeight(r.priority),
  }));
  const plan = planCalendar(jobs, inputs.rigs, fixed, inputs.maintenance, nowMs, t, {
    current: booked.map((r) => ({ jobId: r.id, ...current.get(r.id)! })),
  });
  const rigCode = new Map(inputs.rigs.map((g) => [g.id, g.code]));
  const byRun = new Map(booked.map((r) => [r.id, r]));
  const iso = (ms: number) => new Date(ms).toISOString();
  const rigById = new Map(inputs.rigs.map((g) => [g.id, g]));
  const jobById = new Map(jobs.map((j) => [j.id, j]));
  const runs = plan.assignments.map((a) => {
    const r = byRun.get(a.jobId)!;
    const cur = current.get(a.jobId)!;
    const due = r.dueAt?.getTime() ?? null;
    const rig = rigById.get(cur.rigId);
    const others = inputs.commitments.filter((c) => c.runId !== r.id);
    const currentConflicts = rig
      ? rigRefusals(rig, jobById.get(r.id)!, { ...cur, commitments: others, maintenance: inputs.maintenance, timing: t }, 'window')
      : [];
    return {
      currentConflicts,
      runId: r.id,
      code: r.code,
      rowVersion: r.rowVersion,
      priority: r.priority,
      dueAt: r.dueAt?.toISOString() ?? null,
      current: {
        rigId: cur.rigId,
        rigCode: rigCode.get(cur.rigId) ?? '',
        start: iso(cur.startMs),
        end: iso(cur.endMs),
        lateH: lateH(cur.endMs, due, t.msPerClockH),
      },
      proposed: { rigId: a.rigId, rigCode: a.rigCode, start: iso(a.startMs), end: iso(a.endMs), lateH: lateH(a.endMs, due, t.msPerClockH) },
      moved: a.rigId !== cur.rigId || a.startMs !== cur.startMs,
    };
  });
  const currentWeighted = weightedTardinessH(
    booked.map((r) => ({ endMs: current.get(r.id)!.endMs, dueMs: r.dueAt?.getTime() ?? null, weight: priorityWeight(r.priority) })),
    t.msPerClockH,
  );
  // Never propose an order worse than the bookings as they stand when those keep the sharing rule.
  // planCalendar starts from them (so this holds by construction); kept as a safety net.
  const keepAsBooked =
    plan.unplaced.length === 0 && runs.every((r) => r.currentConflicts.length === 0) && plan.weightedTardinessH >= currentWeighted;
  return {
    method: plan.method,
    now: iso(nowMs),
    currentWeightedLateH: Math.round(currentWeighted * 10) / 10,
    proposedWeightedLateH: Math.round((keepAsBooked ? currentWeighted : plan.weightedTardinessH) * 10) / 10,
    runs: keepAsBooked ? runs.map((r) => ({ ...r, proposed: { ...r.current }, moved: false })) : runs,
    unplaced: plan.unplaced.map((u) => ({ runId: u.jobId, code: u.code, reasons: u.reasons })),
  };
}

/** Move booked runs to the windows given (all or none), each checked with the booking rule. */
export async function applyCalendar(
  ctx: AppContext,
  t: TimingOptions,
  actor: SessionUser,
  input: CalendarApplyInput,
): Promise<CalendarApplyResult> {
  return ctx.ds.transaction(async (m: EntityManager) => {
    await advisoryXactLock(m, CALENDAR_LOCK);
    const nowMs = ctx.now().getTime();
    const runIds = input.moves.map((x) => x.runId);
    const runs = new Map((await m.find(RunEntity, { where: { id: In(runIds) } })).map((r) => [r.id, r]));
    for (const mv of input.moves) {
      const r = runs.get(mv.runId);
      if (!r) throw conflict('One of the runs in the proposal no longer exists. Ask for a new proposal.');
      if (r.state !== 'booked') throw conflict(`Run ${r.code} is no longer only booked; ask for a new proposal.`);
      if (r.rowVersion !== mv.rowVersion) {
        throw conflict(`Run ${r.code} changed since the proposal (version ${mv.rowVersion}, now ${r.rowVersion}). Ask for a new proposal.`);
      }
    }
    const inputs = await loadSchedulingInputs(m, nowMs, t);
    const moving = new Set(runIds);
    const placed: Commitment[] = inputs.commitments.filter((c) => !moving.has(c.runId));
    const rigs = new Map((await m.find(RigEntity)).map((g) => [g.id, g]));
    const out: CalendarApplyResult['runs'] = [];
    const order = [...input.moves].sort((a, b) => Date.parse(a.start) - Date.parse(b.start));
    for (const mv of order) {
      const r = runs.get(mv.runId)!;
      const plan = inputs.plans.get(r.planId)!;
      const rig = rigs.get(mv.rigId);
      if (!rig) throw conflict(`The rig proposed for ${r.code} was not found. Ask for a new proposal.`);
      const needs = needsOf(plan, r.sampleSize);
      const startMs = Date.parse(mv.start);
      const endMs = startMs + runDurationMs(needs, t);
      if (startMs < nowMs - t.msPerClockH) {
        throw conflict(`The proposed start of ${r.code} (${when(startMs)}) has passed. Ask for a new proposal.`);
      }
      const reasons = rigRefusals(rig, needs, { startMs, endMs, commitments: placed, maintenance: inputs.maintenance, timing: t });
      if (reasons.length)
        throw conflict(`Run ${r.code} cannot move to ${rig.code} at ${when(startMs)}: ${reasons.join(' ')} Ask for a new proposal.`, {
          reasons,
        });
      placed.push({
        runId: r.id,
        code: r.code,
        rigId: rig.id,
        startMs,
        endMs,
        chamberC: needs.chamberC,
        humidityPct: needs.humidityPct,
        sockets: r.sampleSize,
        holds: holdWindows(startMs, needs, t),
      });
      const fromRig = r.rigId ? (rigs.get(r.rigId)?.code ?? null) : null;
      await m.update(RunEntity, { id: r.id }, { rigId: rig.id, scheduledStart: new Date(startMs), scheduledEnd: new Date(endMs) });
      await ctx.audit.record(
        {
          actor,
          action: 'run.reschedule',
          entity: 'run',
          entityId: r.id,
          reason: 'Calendar ordered by priority-weighted lateness',
          details: {
            fromRig,
            toRig: rig.code,
            fromStart: r.scheduledStart?.toISOString() ?? null,
            toStart: new Date(startMs).toISOString(),
            toEnd: new Date(endMs).toISOString(),
            dueAt: r.dueAt?.toISOString() ?? null,
            priority: r.priority,
          },
        },
        m,
      );
      out.push({
        runId: r.id,
        code: r.code,
        rigCode: rig.code,
        start: new Date(startMs).toISOString(),
        end: new Date(endMs).toISOString(),
      });
    }
    return { moved: out.length, runs: out };
  });
}
