/**
 * Unbiased chamber runs (tc, htsl, ac) moved along from the chamber's own reports (chamber_samples),
 * in the caller's transaction with the run row locked, like run-engine.ts does for socket runs:
 *
 * - heating → stressing at the first report whose load is in the plan's band (tc: at the first report;
 *   the programme itself brings the load to the extremes, and only completed cycles count);
 * - stressing: htsl / ac accrue the hours between consecutive reports both in band (temperature, and
 *   humidity within ± HUMIDITY_TOLERANCE_RH for ac); tc counts cycles from the load temperature
 *   (shared/chamber/profile.ts) and credits cycles × the profile's period as its hours (the plan's hour
 *   measure, which its read points use); a run stops at its next read point or end exactly;
 * - read-hold / cooling: the chamber is sent to room; once the load is at or below the lab's
 *   "safe to open" temperature and not below CHAMBER_OPEN_ABOVE_C (no condensation) the devices may come out: biasRemovedAt (the 96 h window starts when
 *   the stress stops) and the read-point-due event; cooling then finishes.
 * Every device loaded gets the run's hours and cycles: unbiased devices all sit in the same air.
 */
import type { EntityManager } from 'typeorm';
import { newTcCounter, stepTcCounter, tcBands, tcCyclesToH, type TcCounterState } from '../../../shared/chamber/profile';
import { CHAMBER_OPEN_ABOVE_C } from '../../../shared/domain/chamber-methods';
import { HUMIDITY_TOLERANCE_RH, ROOM_AMBIENT_C, chamberLimits, chamberSetpointC } from '../../../shared/domain/standards';
import { isThermalCyclingKind, isUnbiasedKindName, type PlanKind } from '../../../shared/domain/stress';
import type { RigCommandBody } from '../telemetry/contracts';
import { readPointCycles, reachedH, shareToTarget } from '../../../shared/scheduling';
import { RunEntity, type RigEntity, type StressPlanEntity } from '../../db/entities';
import { readHoldSettings } from '../lab-settings/lab-settings.data';
import { readPointDue, transitionRun, type EngineDeps, type StepOutcome } from './run-engine';
import { sortedReadPoints } from './run-view';
import { chamberSampleAt, chamberSamplesAfter, latestChamberSample, storeChamberCredit, type ChamberRow } from './chamber.data';

export const CHAMBER_CHUNK = 500;
export const isChamberRun = (plan: { kind: string }): boolean => isUnbiasedKindName(plan.kind);

/** Whether a report has the load within the plan's band (and the humidity, when the plan holds one). */
export function loadInBand(plan: Pick<StressPlanEntity, 'chamberC' | 'chamberBand' | 'humidityPct'>, r: ChamberRow): boolean {
  const l = chamberLimits(plan.chamberC, plan.chamberBand);
  if (!(r.loadC >= l.lowC && r.loadC <= l.highC) || r.doorOpen) return false;
  if (plan.humidityPct === null) return true;
  return r.humidityPct !== null && Math.abs(r.humidityPct - plan.humidityPct) <= HUMIDITY_TOLERANCE_RH;
}

/** A report outside what the plan allows while stressing (over-temperature, or past a cycling extreme's band); words for the alarm. */
export function excursionOf(
  plan: {
    kind: string;
    chamberC: number;
    chamberBand: { belowK: number; aboveK: number };
    thermalCycle?: { lowC: number; highC: number } | null;
  },
  loadC: number,
): string | null {
  if (isThermalCyclingKind(plan.kind as PlanKind) && plan.thermalCycle) {
    const b = tcBands(plan.thermalCycle);
    if (loadC > b.hot.highC) return `load ${loadC.toFixed(1)} °C above the hot extreme's band (${b.hot.highC} °C)`;
    if (loadC < b.cold.lowC) return `load ${loadC.toFixed(1)} °C below the cold extreme's band (${b.cold.lowC} °C)`;
    return null;
  }
  const top = chamberLimits(plan.chamberC, plan.chamberBand).highC;
  return loadC > top ? `load ${loadC.toFixed(1)} °C above the band's top (${top} °C)` : null;
}

function nextStop(run: RunEntity, plan: StressPlanEntity, rps: number[]): { index: number; targetH: number; targetCycles: number | null } {
  const tc = plan.thermalCycle;
  const cyclesAt = (h: number) =>
    tc ? readPointCycles({ durationH: plan.durationH, cycle: { onMin: 1, offMin: 1, deltaTjC: 1, cycles: tc.cycles } }, h) : null;
  let idx = run.nextReadPoint;
  while (idx < rps.length && rps[idx] <= 0) idx++;
  if (idx < rps.length && rps[idx] < plan.durationH) return { index: idx, targetH: rps[idx], targetCycles: cyclesAt(rps[idx]) };
  return { index: -1, targetH: plan.durationH, targetCycles: tc ? tc.cycles : null };
}

export async function chamberHeatingStep(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<StepOutcome> {
  const rows = await chamberSamplesAfter(m, rig.id, run.accruedToSeq, CHAMBER_CHUNK);
  const tc = isThermalCyclingKind(plan.kind) && plan.thermalCycle;
  const first = rows.find((r) => (tc ? !r.doorOpen : loadInBand(plan, r)));
  if (!first) return { changed: false, events: [] };
  const ev = await transitionRun(
    m,
    deps,
    run,
    rig,
    'stressing',
    {
      ambientReachedAt: deps.now(),
      accruedToSeq: first.seq,
      accruedToClockS: first.clockS,
      chamberCounter: tc ? (run.chamberCounter ?? newTcCounter()) : null,
    },
    {
      actor: 'system',
      action: 'run.ambient-reached',
      details: { seq: first.seq, loadC: first.loadC, airC: first.airC, chamberClockS: first.clockS },
    },
  );
  return { changed: true, to: 'stressing', events: [ev] };
}

export async function chamberAccrueStep(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<StepOutcome> {
  const rows = await chamberSamplesAfter(m, rig.id, run.accruedToSeq, CHAMBER_CHUNK);
  if (!rows.length) return { changed: false, events: [] };
  const rps = sortedReadPoints(plan);
  const tc = isThermalCyclingKind(plan.kind) ? plan.thermalCycle : null;
  let prev: ChamberRow | null = run.accruedToSeq > 0 ? await chamberSampleAt(m, rig.id, run.accruedToSeq) : null;
  let hours = run.stressHours;
  let cycles = run.cyclesDone;
  let counter: TcCounterState | null = tc ? (run.chamberCounter ?? newTcCounter()) : null;
  let lastSeq = run.accruedToSeq;
  let lastClock = run.accruedToClockS;
  let outcome: { to: 'read-hold' | 'cooling'; index: number } | null = null;
  for (const cur of rows) {
    const stop = nextStop(run, plan, rps);
    if (tc && counter) {
      const s = stepTcCounter(tc, counter, cur.clockS / 60, cur.loadC, plan.chamberBand);
      counter = s.state;
      if (s.completed && stop.targetCycles !== null && cycles < stop.targetCycles) {
        cycles += s.completed;
        hours = tcCyclesToH(tc, cycles);
      }
    } else if (prev && loadInBand(plan, prev) && loadInBand(plan, cur) && cur.clockS > prev.clockS) {
      const dh = (cur.clockS - prev.clockS) / 3600;
      hours += dh * shareToTarget(hours, dh, stop.targetH);
    }
    prev = cur;
    lastSeq = cur.seq;
    lastClock = cur.clockS;
    const reached = tc ? stop.targetCycles !== null && cycles >= stop.targetCycles : reachedH(hours, stop.targetH);
    if (reached) {
      if (!tc) hours = stop.targetH;
      outcome = { to: stop.index < 0 ? 'cooling' : 'read-hold', index: stop.index };
      break;
    }
  }
  await storeChamberCredit(m, run.id, { hours, cycles, seq: lastSeq, clockS: lastClock, counter, minSwingK: counter?.minSwingK ?? null });
  Object.assign(run, {
    stressHours: hours,
    cyclesDone: cycles,
    accruedToSeq: lastSeq,
    accruedToClockS: lastClock,
    chamberCounter: counter,
  });
  if (!outcome) return { changed: true, events: [], more: rows.length === CHAMBER_CHUNK };
  const now = deps.now();
  const details = { stressHours: hours, seq: lastSeq, ...(tc ? { cycles, targetCycles: tc.cycles } : {}) };
  // Devices are unbiased: the hold only brings the chamber to room before its door is opened.
  const ev =
    outcome.to === 'cooling'
      ? await transitionRun(
          m,
          deps,
          run,
          rig,
          'cooling',
          { nextReadPoint: rps.length, biasRemovedAt: null, holdPhase: 'bias-off', holdPhaseSince: now },
          {
            actor: 'system',
            action: 'run.stress-complete',
            details: { ...details, targetH: plan.durationH },
          },
        )
      : await transitionRun(
          m,
          deps,
          run,
          rig,
          'read-hold',
          { nextReadPoint: outcome.index + 1, biasRemovedAt: null, holdPhase: 'bias-off', holdPhaseSince: now },
          {
            actor: 'system',
            action: 'run.read-point',
            details: { ...details, readPointH: rps[outcome.index] },
          },
        );
  return { changed: true, to: outcome.to, events: [ev] };
}

/** Read-hold and cooling: the devices may come out once the load is at or below the lab's safe-to-open temperature. */
export async function chamberHoldStep(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<StepOutcome> {
  if (run.biasRemovedAt) {
    if (run.state !== 'cooling') return { changed: false, events: [] };
    const ev = await transitionRun(
      m,
      deps,
      run,
      rig,
      'finished',
      { finishedAt: deps.now() },
      {
        actor: 'system',
        action: 'run.finish',
        details: { stressHours: run.stressHours, targetH: plan.durationH, cycles: run.cyclesDone },
      },
    );
    return { changed: true, to: 'finished', events: [ev] };
  }
  const latest = await latestChamberSample(m, rig.id);
  const settings = await readHoldSettings(m);
  // Hand-safe, and not cold: a load opened below room temperature gathers condensation on the devices.
  if (!latest || latest.seq <= run.accruedToSeq || latest.loadC > settings.safeToOpenC || latest.loadC < CHAMBER_OPEN_ABOVE_C) {
    return { changed: false, events: [] };
  }
  const now = deps.now();
  await m.update(RunEntity, { id: run.id }, { holdPhase: 'safe-to-open', holdPhaseSince: now, biasRemovedAt: now });
  await deps.audit.record(
    {
      actor: 'system',
      action: 'run.hold-phase',
      entity: 'run',
      entityId: run.id,
      reason: null,
      details: { from: run.holdPhase, to: 'safe-to-open', loadC: latest.loadC, safeToOpenC: settings.safeToOpenC },
    },
    m,
  );
  const rps = sortedReadPoints(plan);
  const final = run.state === 'cooling';
  const idx = final ? rps.findIndex((h) => h >= plan.durationH) : run.nextReadPoint - 1;
  const readPointH = final ? (idx >= 0 ? rps[idx] : plan.durationH) : rps[idx];
  const ev = readPointDue(run, rig, readPointH, idx, run.stressHours, now, final);
  Object.assign(run, { holdPhase: 'safe-to-open', holdPhaseSince: now, biasRemovedAt: now });
  return { changed: true, events: [ev], more: final };
}

export async function chamberStep(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<StepOutcome | null> {
  if (run.state === 'heating') return chamberHeatingStep(m, deps, run, plan, rig);
  if (run.state === 'stressing') return chamberAccrueStep(m, deps, run, plan, rig);
  if (run.state === 'read-hold' || run.state === 'cooling') return chamberHoldStep(m, deps, run, plan, rig);
  return null;
}

const b36 = (d: Date | null | undefined) => (d ? d.getTime().toString(36) : '0');

/**
 * The chamber commands a run's state wants: its programme while heating / stressing (the cycling
 * profile for tc, the set point and humidity otherwise), room temperature with humidity off in a
 * hold, at the end, paused, in fault or aborted. Never a bias command: nothing is biased.
 */
export async function chamberWants(
  m: EntityManager,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<Array<{ cmdId: string; cmd: RigCommandBody; satisfied: boolean; reportSeq: number | null }>> {
  const latest = await latestChamberSample(m, rig.id);
  const at = (c: number) => !!latest && Math.abs(latest.setpointC - c) < 0.05;
  const reportSeq = latest?.seq ?? null;
  if (run.state === 'heating' || run.state === 'stressing') {
    const tc = isThermalCyclingKind(plan.kind) ? plan.thermalCycle : null;
    const setpointC = chamberSetpointC(plan.chamberC, plan.chamberBand);
    const cmd: RigCommandBody = {
      type: 'setpoint',
      setpointC,
      humidityPct: plan.humidityPct,
      ...(tc ? { profile: { lowC: tc.lowC, highC: tc.highC, dwellMin: tc.dwellMin, rampKPerMin: tc.rampKPerMin } } : { profile: null }),
    };
    // A cycling programme's set point moves all the time: the command goes once per heating phase (its cmdId).
    return [{ cmdId: `run:${run.id}:chamber:${b36(run.heatingSince)}`, cmd, satisfied: !tc && at(setpointC), reportSeq }];
  }
  if (['read-hold', 'cooling', 'paused', 'fault', 'aborted'].includes(run.state)) {
    const key =
      run.state === 'read-hold' ? `rp${run.nextReadPoint - 1}` : run.state === 'paused' ? `p${b36(run.stateChangedAt)}` : run.state;
    const cmd: RigCommandBody = { type: 'setpoint', setpointC: ROOM_AMBIENT_C, humidityPct: null, profile: null };
    return [
      { cmdId: `run:${run.id}:room:${key}`, cmd, satisfied: at(ROOM_AMBIENT_C) && (latest?.humidityPct ?? null) === null, reportSeq },
    ];
  }
  return [];
}
