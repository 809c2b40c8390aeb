/**
 * The database steps that move a run along from its stored telemetry. Each runs inside the
 * caller's transaction with the run row locked (SELECT … FOR UPDATE), so the scheduler's tick, the
 * telemetry listener and a person's action (pause) never accrue the same sample twice.
 *
 * Accrual reads telemetry_batches / telemetry_samples with seq > runs.accrued_to_seq in seq order
 * and stores hours + the new accrued_to_seq in the same statement group: after a restart every
 * run continues exactly where the database says it stopped.
 */
import type { EntityManager } from 'typeorm';
import {
  accrualConditionsFor,
  accrueInterval,
  chamberBand,
  HUMIDITY_TOLERANCE_RH,
  reachedH,
  type ClockSample,
} from '../../../shared/scheduling';
import { RUN_STATE_LABEL, type RunState } from '../../../shared/schemas/runs';
import { RunEntity, RunSocketEntity, type RigEntity, type StressPlanEntity } from '../../db/entities';
import type { AuditService } from '../audit/audit.service';
import type { SessionUser } from '../../../shared/schemas/auth';
import { measureByMs } from '../../../shared/domain/standards';
import type { PendingRunEvent } from './run-events';
import { sortedReadPoints } from './run-view';
import { batchAt, batchesAfter, firstInBand, socketSamples, toClockSample, type BatchRow } from './telemetry-reads';
import { socketThetaJc, storeRunAccrual, storeSocketAccrual, storeSocketSegments } from './runs.data';
import { intervalSegments, type SocketSegments } from './stress-segments';

/** A missing seq is waited for this long (it may still arrive from the rig's outbox) before it is skipped. */
export const GAP_WAIT_MS = 30_000;
/** Batches read per accrual step. */
export const ACCRUAL_CHUNK = 500;

type PendingEvent = PendingRunEvent;

export interface EngineDeps {
  audit: AuditService;
  now: () => Date;
}

export interface StepOutcome {
  /** Anything written (hours, seq, state). */
  changed: boolean;
  /** New state when the step changed it. */
  to?: RunState;
  /** Events to emit after commit. */
  events: PendingEvent[];
  /** More telemetry is waiting (call again). */
  more?: boolean;
}

const base = (run: RunEntity, rig: RigEntity | null) => ({
  runId: run.id,
  runCode: run.code,
  rigId: rig?.id ?? run.rigId,
  rigCode: rig?.code ?? null,
});

/**
 * Change state (row_version + 1) and audit it in the caller's transaction; returns the
 * state-changed event to emit after commit.
 */
export async function transitionRun(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  rig: RigEntity | null,
  to: RunState,
  patch: Partial<Omit<RunEntity, 'plan' | 'rig' | 'sample'>>, // columns only: a relation object in an UPDATE is a mistake
  audit: { actor: SessionUser | 'system'; action: string; reason?: string | null; details?: Record<string, unknown> },
): Promise<PendingEvent> {
  const from = run.state;
  const at = deps.now();
  await m.update(RunEntity, { id: run.id }, { ...patch, state: to, stateChangedAt: at });
  await deps.audit.record(
    {
      actor: audit.actor,
      action: audit.action,
      entity: 'run',
      entityId: run.id,
      reason: audit.reason ?? null,
      details: { from, to, fromLabel: RUN_STATE_LABEL[from], toLabel: RUN_STATE_LABEL[to], ...(audit.details ?? {}) },
    },
    m,
  );
  Object.assign(run, patch, { state: to, stateChangedAt: at, rowVersion: run.rowVersion + 1 });
  return {
    type: 'state-changed',
    ...base(run, rig),
    from,
    to,
    actor: audit.actor === 'system' ? 'system' : audit.actor.email,
    reason: audit.reason ?? null,
    at: at.toISOString(),
  };
}

/** Index of the next read point after time zero. */
export function firstReadPointIndex(readPointsH: number[]): number {
  return sortedReadPoints({ readPointsH }).filter((h) => h <= 0).length;
}

/**
 * Heating: find the first sample after the heating boundary (accrued_to_seq) with the chamber
 * within the plan's band (and humidity within band). Found → stressing, accrual starts from that sample.
 */
export async function heatingStep(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<StepOutcome> {
  const band = chamberBand(plan.chamberC, plan.chamberBand);
  const hum =
    plan.humidityPct === null
      ? null
      : { lowPct: plan.humidityPct - HUMIDITY_TOLERANCE_RH, highPct: plan.humidityPct + HUMIDITY_TOLERANCE_RH };
  const b = await firstInBand(m, rig.id, run.accruedToSeq, band, hum);
  if (!b) return { changed: false, events: [] };
  const ev = await transitionRun(
    m,
    deps,
    run,
    rig,
    'stressing',
    { ambientReachedAt: deps.now(), accruedToSeq: b.seq, accruedToClockS: b.clockS },
    {
      actor: 'system',
      action: 'run.ambient-reached',
      details: { seq: b.seq, chamberC: b.chamberC, stressClockS: b.clockS, lowC: band.lowC, highC: band.highC },
    },
  );
  return { changed: true, to: 'stressing', events: [ev] };
}

/** Where accrual stands after folding a chunk of telemetry. */
interface AccrualFold {
  hours: number;
  socketH: Map<number, number>;
  touched: Set<number>;
  newlyTripped: Set<number>;
  lastSeq: number;
  lastClock: number | null;
  outcome: 'read-hold' | 'cooling' | null;
  holdIndex: number;
  processed: number;
  /** Credited hours by estimated junction temperature, per socket (stress-segments.ts). */
  segments: SocketSegments;
}

/**
 * Adds the chunk's intervals in seq order, stopping at a gap still worth waiting for, at the end
 * of stress or at a read point.
 */
function foldBatches(
  run: RunEntity,
  plan: StressPlanEntity,
  rps: number[],
  sockets: RunSocketEntity[],
  batches: BatchRow[],
  samples: Awaited<ReturnType<typeof socketSamples>>,
  firstPrev: ClockSample | null,
  now: Date,
  segments: SocketSegments,
): AccrualFold {
  const socketIdx = sockets.map((s) => s.socketIndex);
  const latched = new Set(sockets.filter((s) => s.tripped).map((s) => s.socketIndex));
  const cond = accrualConditionsFor(plan);
  let prev = firstPrev;
  const f: AccrualFold = {
    hours: run.stressHours,
    socketH: new Map(sockets.map((s) => [s.socketIndex, s.accruedHours])),
    touched: new Set<number>(),
    newlyTripped: new Set<number>(),
    lastSeq: run.accruedToSeq,
    lastClock: run.accruedToClockS,
    outcome: null,
    holdIndex: -1,
    processed: 0,
    segments,
  };
  for (const b of batches) {
    if (prev && b.seq !== prev.seq + 1 && now.getTime() - b.storedAt.getTime() < GAP_WAIT_MS) break;
    const cur = toClockSample(b, samples.get(b.seq) ?? []);
    const r = accrueInterval(prev, cur, cond, socketIdx, latched);
    f.hours = f.hours + r.runS / 3600;
    for (const [k, s] of r.socketS) {
      f.socketH.set(k, (f.socketH.get(k) ?? 0) + s / 3600);
      f.touched.add(k);
    }
    if (prev) intervalSegments(f.segments, prev, cur, r.socketS, plan.humidityPct !== null);
    for (const k of r.newlyTripped) {
      latched.add(k);
      f.newlyTripped.add(k);
    }
    prev = cur;
    f.lastSeq = b.seq;
    f.lastClock = b.clockS;
    f.processed++;
    if (reachedH(f.hours, plan.durationH)) {
      f.outcome = 'cooling';
      break;
    }
    let idx = run.nextReadPoint;
    while (idx < rps.length && rps[idx] <= 0) idx++;
    if (idx < rps.length && rps[idx] < plan.durationH && reachedH(f.hours, rps[idx])) {
      while (idx + 1 < rps.length && rps[idx + 1] < plan.durationH && reachedH(f.hours, rps[idx + 1])) idx++;
      f.outcome = 'read-hold';
      f.holdIndex = idx;
      break;
    }
  }
  return f;
}

/** Stores the run's and the sockets' accrued hours (and trips seen in telemetry). */
async function saveAccrual(m: EntityManager, run: RunEntity, f: AccrualFold, now: Date): Promise<void> {
  const { hours, lastSeq, lastClock, socketH, touched, newlyTripped } = f;
  await storeRunAccrual(m, run.id, hours, lastSeq, lastClock);
  run.stressHours = hours;
  run.accruedToSeq = lastSeq;
  run.accruedToClockS = lastClock;
  const changedSockets = [...new Set([...touched, ...newlyTripped])];
  if (changedSockets.length) {
    await storeSocketAccrual(
      m,
      run.id,
      now,
      changedSockets,
      changedSockets.map((k) => socketH.get(k) ?? 0),
      changedSockets.map((k) => newlyTripped.has(k)),
    );
  }
  const withSegments = [...touched].filter((k) => f.segments.bySocket.has(k)).sort((a, b) => a - b);
  await storeSocketSegments(
    m,
    run.id,
    withSegments,
    withSegments.map((k) => JSON.stringify(f.segments.bySocket.get(k))),
  );
}

/** The end of stress (→ cooling) or a read point (→ read-hold) with its read-point-due event. */
async function stopEvents(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
  rps: number[],
  f: AccrualFold,
  now: Date,
): Promise<PendingEvent[]> {
  const { hours, lastSeq, holdIndex } = f;
  const events: PendingEvent[] = [];
  if (f.outcome === 'cooling') {
    const finalIdx = rps.findIndex((h) => h >= plan.durationH);
    events.push(
      await transitionRun(
        m,
        deps,
        run,
        rig,
        'cooling',
        { nextReadPoint: rps.length, biasRemovedAt: now },
        {
          actor: 'system',
          action: 'run.stress-complete',
          details: { stressHours: hours, targetH: plan.durationH, seq: lastSeq },
        },
      ),
    );
    events.push(readPointDue(run, rig, finalIdx >= 0 ? rps[finalIdx] : plan.durationH, finalIdx, hours, now, true));
  } else if (f.outcome === 'read-hold') {
    events.push(
      await transitionRun(
        m,
        deps,
        run,
        rig,
        'read-hold',
        { nextReadPoint: holdIndex + 1, biasRemovedAt: now },
        {
          actor: 'system',
          action: 'run.read-point',
          details: { readPointH: rps[holdIndex], stressHours: hours, seq: lastSeq },
        },
      ),
    );
    events.push(readPointDue(run, rig, rps[holdIndex], holdIndex, hours, now, false));
  }
  return events;
}

/**
 * Stressing: accrue the telemetry after accrued_to_seq (one chunk), then stop at a read point
 * (→ read-hold) or at the end of stress (→ cooling). Hours are added interval by interval in seq
 * order, so the total does not depend on how the telemetry was chunked (or on restarts).
 */
export async function accrueStep(
  m: EntityManager,
  deps: EngineDeps,
  run: RunEntity,
  plan: StressPlanEntity,
  rig: RigEntity,
): Promise<StepOutcome> {
  const now = deps.now();
  const sockets = await m.find(RunSocketEntity, { where: { runId: run.id }, order: { socketIndex: 'ASC' } });
  const socketIdx = sockets.map((s) => s.socketIndex);

  const batches = await batchesAfter(m, rig.id, run.accruedToSeq, ACCRUAL_CHUNK);
  if (!batches.length) return { changed: false, events: [] };
  const fromSeq = run.accruedToSeq > 0 ? run.accruedToSeq : batches[0].seq;
  const samples = await socketSamples(m, rig.id, fromSeq, batches[batches.length - 1].seq, socketIdx);
  let prev: ClockSample | null = null;
  if (run.accruedToSeq > 0) {
    const pb = await batchAt(m, rig.id, run.accruedToSeq);
    if (pb) prev = toClockSample(pb, samples.get(pb.seq) ?? []);
  }

  const rps = sortedReadPoints(plan);
  const segments: SocketSegments = {
    thetaJc: await socketThetaJc(m, run.id),
    bySocket: new Map(sockets.map((s) => [s.socketIndex, s.stressSegments ?? []])),
  };
  const f = foldBatches(run, plan, rps, sockets, batches, samples, prev, now, segments);
  if (!f.processed) return { changed: false, events: [] };
  await saveAccrual(m, run, f, now);
  const events = await stopEvents(m, deps, run, plan, rig, rps, f, now);
  return {
    changed: true,
    to: f.outcome ?? undefined,
    events,
    more: !f.outcome && f.processed === batches.length && batches.length === ACCRUAL_CHUNK,
  };
}

function readPointDue(
  run: RunEntity,
  rig: RigEntity,
  readPointH: number,
  index: number,
  hours: number,
  at: Date,
  final: boolean,
): PendingEvent {
  return {
    type: 'read-point-due',
    ...base(run, rig),
    readPointH,
    readPointIndex: index,
    stressHours: hours,
    biasRemovedAt: at.toISOString(),
    measureBy: new Date(measureByMs(at.getTime())).toISOString(),
    final,
    at: at.toISOString(),
  };
}
