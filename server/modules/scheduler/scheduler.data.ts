/**
 * The run scheduler's reads and writes (raw SQL and TypeORM), kept apart from its rules in
 * scheduler.ts. Each takes the EntityManager to use: `ds.manager`, or a transaction's.
 */
import { MEASURE_PENDING_STATES, sqlStateList } from '../../../shared/domain/run-states';
import { In, IsNull, MoreThan, Not, type EntityManager } from 'typeorm';
import { DRIVEN_STATES, HEAT_STATES, type RunState } from '../../../shared/schemas/runs';
import type { HoldPhase } from '../../../shared/holds/sequence';
import { AuditLogEntity, RigEntity, RunEntity, RunSocketEntity, StressPlanEntity } from '../../db/entities';

/** Runs the scheduler drives: every driven state, and aborted runs that started, until `abortedSince`. */
export function drivenRuns(m: EntityManager, abortedSince: Date): Promise<RunEntity[]> {
  return m.getRepository(RunEntity).find({
    where: [{ state: In([...DRIVEN_STATES]) }, { state: 'aborted', startedAt: Not(IsNull()), finishedAt: MoreThan(abortedSince) }],
    order: { createdAt: 'ASC' },
  });
}

export interface HeldReadPointRow {
  id: string;
  code: string;
  state: RunState;
  bias_removed_at: Date;
  next_read_point: number;
  rig_id: string | null;
  rig_code: string | null;
  read_points_h: number[];
  duration_h: number;
}

/** Runs whose bias came off before `before` and that hold a read point (read-hold) or end on one (cooling, finished). */
export function readPointHoldsBefore(m: EntityManager, before: Date): Promise<HeldReadPointRow[]> {
  return m.query(
    `SELECT r.id, r.code, r.state, r.bias_removed_at, r.next_read_point, r.rig_id, g.code AS rig_code, p.read_points_h, p.duration_h
     FROM runs r JOIN stress_plans p ON p.id = r.plan_id LEFT JOIN rigs g ON g.id = r.rig_id
     WHERE r.state IN ${sqlStateList(MEASURE_PENDING_STATES)} AND r.bias_removed_at IS NOT NULL AND r.bias_removed_at < $1`,
    [before],
  );
}

/** Has the run any measurement at this read point? */
export async function hasMeasurementAt(m: EntityManager, runId: string, readPointH: number): Promise<boolean> {
  const rows: unknown[] = await m.query(`SELECT 1 FROM measurements WHERE run_id = $1 AND abs(read_point_h - $2) < 1e-6 LIMIT 1`, [
    runId,
    readPointH,
  ]);
  return rows.length > 0;
}

/** The latest audit entry of this action on the run (the scheduler reports some things once). */
export function lastRunAudit(m: EntityManager, runId: string, action: string): Promise<AuditLogEntity | null> {
  return m.getRepository(AuditLogEntity).findOne({ where: { entity: 'run', entityId: runId, action }, order: { id: 'DESC' } });
}

export interface RunBundle {
  run: RunEntity;
  plan: StressPlanEntity;
  rig: RigEntity;
}

/** The run (row-locked when `lock`), its plan and its rig; null when it is gone or not on a rig. */
export async function runOnRig(m: EntityManager, runId: string, lock = false): Promise<RunBundle | null> {
  const run = await m.findOne(RunEntity, { where: { id: runId }, ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}) });
  if (!run || !run.rigId) return null;
  const plan = await m.findOneByOrFail(StressPlanEntity, { id: run.planId });
  const rig = await m.findOneByOrFail(RigEntity, { id: run.rigId });
  return { run, plan, rig };
}

export function findRun(m: EntityManager, runId: string): Promise<RunEntity | null> {
  return m.findOneBy(RunEntity, { id: runId });
}

export function findPlan(m: EntityManager, planId: string): Promise<StressPlanEntity> {
  return m.findOneByOrFail(StressPlanEntity, { id: planId });
}

/** Does another run in this oven need the chamber hot? */
export async function otherRunNeedsHeat(m: EntityManager, rigId: string, runId: string): Promise<boolean> {
  return (await m.count(RunEntity, { where: { rigId, id: Not(runId), state: In([...HEAT_STATES]) } })) > 0;
}

/** The codes of the other runs in this oven that need the chamber hot. */
export async function otherRunsNeedingHeat(m: EntityManager, rigId: string, runId: string): Promise<string[]> {
  const rows = await m.find(RunEntity, { where: { rigId, id: Not(runId), state: In([...HEAT_STATES]) }, order: { code: 'ASC' } });
  return rows.map((r) => r.code);
}

/**
 * A hold's new phase (shared/holds); `biasRemovedAt` when bias comes off now. Not a state change:
 * no row_version bump, so people's actions on the run stay valid.
 */
export async function setHoldPhase(
  m: EntityManager,
  runId: string,
  phase: HoldPhase,
  since: Date,
  biasRemovedAt: Date | null,
): Promise<void> {
  await m.query(`UPDATE runs SET hold_phase = $2, hold_phase_since = $3, bias_removed_at = COALESCE($4, bias_removed_at) WHERE id = $1`, [
    runId,
    phase,
    since,
    biasRemovedAt,
  ]);
}

export function runSockets(m: EntityManager, runId: string): Promise<RunSocketEntity[]> {
  return m.find(RunSocketEntity, { where: { runId }, order: { socketIndex: 'ASC' } });
}

export function bookedRunsOn(m: EntityManager, rigId: string): Promise<number> {
  return m.count(RunEntity, { where: { rigId, state: 'booked' } });
}

/** A new estimate of a running run's end: not a state change, so no row_version bump (people's actions stay valid). */
export async function setEstimatedEnd(m: EntityManager, runId: string, end: Date): Promise<void> {
  await m.query(`UPDATE runs SET scheduled_end = $1 WHERE id = $2`, [end, runId]);
}

/** One re-plan at a time, across processes (transaction-scoped advisory lock). */
export async function lockReplanning(m: EntityManager): Promise<void> {
  await m.query('SELECT pg_advisory_xact_lock($1)', [478_001]);
}

export async function moveBooking(m: EntityManager, runId: string, rigId: string, start: Date, end: Date): Promise<void> {
  await m.update(RunEntity, { id: runId }, { rigId, scheduledStart: start, scheduledEnd: end });
}
