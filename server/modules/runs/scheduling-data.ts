/**
 * The database side of scheduling: rigs, the windows runs hold on them and maintenance, turned
 * into the pure inputs of shared/scheduling. Also the timing options (read-point hold, heating
 * allowance, the clock rate shared with the simulator).
 */
import { In, MoreThan, type EntityManager } from 'typeorm';
import {
  holdWindows,
  intermediateReadPoints,
  msPerClockHFor,
  runDurationMs,
  type Commitment,
  type MaintenanceWindow,
  type TimingOptions,
  chamberNeedsOf,
} from '../../../shared/scheduling';
import { ON_RIG_STATES, type RunState } from '../../../shared/schemas/runs';
import { chamberSetpointC } from '../../../shared/domain/standards';
import type { ServerConfig } from '../../config';
import { RigEntity, RigMaintenanceEntity, RunEntity, StressPlanEntity } from '../../db/entities';

/** States of a run on the rig that still have a heat-up ahead (as projectedWindow counts them). */
const HEAT_AHEAD_STATES: readonly RunState[] = ['heating', 'paused', 'read-hold', 'fault'];

/** States that hold a window on a rig's timeline. */
export const SCHEDULED_STATES: readonly RunState[] = ['booked', ...ON_RIG_STATES];

export function timingFrom(config: Pick<ServerConfig, 'clockRate'>, env: NodeJS.ProcessEnv = process.env): TimingOptions {
  const hold = Number(env.EMBERLOT_READ_HOLD_H ?? 24);
  const heat = Number(env.EMBERLOT_HEATING_ALLOWANCE_H ?? 2);
  return {
    holdPerReadPointH: Number.isFinite(hold) && hold >= 0 ? hold : 24,
    heatingAllowanceH: Number.isFinite(heat) && heat >= 0 ? heat : 2,
    msPerClockH: msPerClockHFor(config.clockRate),
  };
}

/**
 * Expected end of a run: a booked run keeps its window; a run on the rig ends after its remaining
 * stress hours, the holds of the read points still ahead (and the one it waits in), and a heat-up
 * when it is heating or paused — never before its booked end.
 */
export function projectedWindow(
  run: RunEntity,
  plan: StressPlanEntity,
  nowMs: number,
  t: TimingOptions,
): { startMs: number; endMs: number } {
  const booked = {
    startMs: run.scheduledStart?.getTime() ?? nowMs,
    endMs: run.scheduledEnd?.getTime() ?? nowMs + runDurationMs(plan, t),
  };
  if (run.state === 'booked' || run.state === 'loading') {
    // Not started yet: an overdue booking slides to now, keeping its length.
    const startMs = Math.max(booked.startMs, nowMs);
    return { startMs, endMs: startMs + (booked.endMs - booked.startMs) };
  }
  const remainingH = Math.max(0, plan.durationH - run.stressHours);
  const ahead = intermediateReadPoints(plan.readPointsH, plan.durationH).filter((h) => h > run.stressHours).length;
  const holding = run.state === 'read-hold' ? 1 : 0;
  const heat = HEAT_AHEAD_STATES.includes(run.state) ? t.heatingAllowanceH : 0;
  const remainingMs = (remainingH + (ahead + holding) * t.holdPerReadPointH + heat) * t.msPerClockH;
  const startMs = run.startedAt?.getTime() ?? booked.startMs;
  return { startMs, endMs: Math.max(booked.endMs, nowMs + remainingMs) };
}

export interface SchedulingInputs {
  rigs: RigEntity[];
  commitments: Commitment[];
  maintenance: MaintenanceWindow[];
  runs: RunEntity[];
  plans: Map<string, StressPlanEntity>;
}

/** Everything the pure functions need; `exclude` leaves one run out (it is the one being placed). */
export async function loadSchedulingInputs(m: EntityManager, nowMs: number, t: TimingOptions, exclude?: string): Promise<SchedulingInputs> {
  const rigs = await m.find(RigEntity, { order: { code: 'ASC' } });
  const runs = (await m.find(RunEntity, { where: { state: In([...SCHEDULED_STATES]) } })).filter((r) => r.id !== exclude && r.rigId);
  const planIds = [...new Set(runs.map((r) => r.planId))];
  const plans = new Map((planIds.length ? await m.find(StressPlanEntity, { where: { id: In(planIds) } }) : []).map((p) => [p.id, p]));
  const commitments: Commitment[] = runs.map((r) => {
    const plan = plans.get(r.planId)!;
    const w = projectedWindow(r, plan, nowMs, t);
    const started = r.state !== 'booked' && r.state !== 'loading';
    return {
      holds: started
        ? holdWindows(nowMs, plan, t, {
            doneH: r.stressHours,
            heating: HEAT_AHEAD_STATES.includes(r.state),
            holdingNow: r.state === 'read-hold',
          })
        : holdWindows(w.startMs, plan, t),
      runId: r.id,
      code: r.code,
      rigId: r.rigId!,
      startMs: w.startMs,
      endMs: w.endMs,
      chamberC: chamberSetpointC(plan.chamberC, plan.chamberBand),
      humidityPct: plan.humidityPct,
      sockets: r.sampleSize,
      profileKey: chamberNeedsOf(plan)?.profileKey ?? null,
    };
  });
  const maint = await m.find(RigMaintenanceEntity, { where: { endsAt: MoreThan(new Date(nowMs)) } });
  const maintenance = maint.map((x) => ({ rigId: x.rigId, startMs: x.startsAt.getTime(), endMs: x.endsAt.getTime(), reason: x.reason }));
  return { rigs, commitments, maintenance, runs, plans };
}
