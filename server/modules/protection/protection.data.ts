/**
 * Protection's writes to the database (its reads of a rig's runs are in run-context.ts; its alarms
 * go through the alarms service).
 */
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../context';
import { AlarmEntity, RigEntity, RunEntity, RunSocketEntity, StressPlanEntity } from '../../db/entities';

/** Mark a run's socket tripped, with the time and reason. */
export async function markSocketTripped(ctx: AppContext, runId: string, socket: number, at: Date, reason: string): Promise<void> {
  await ctx.ds.getRepository(RunSocketEntity).update({ runId, socketIndex: socket }, { tripped: true, trippedAt: at, tripReason: reason });
}

/** What a trip reset reads, under the run's row lock: the run, its rig, its plan, and the socket's device type. */
export async function tripResetRows(m: EntityManager, runId: string, socket: number) {
  const run = await m.findOne(RunEntity, { where: { id: runId }, lock: { mode: 'pessimistic_write' } });
  if (!run) return null;
  const rig = run.rigId ? await m.findOneBy(RigEntity, { id: run.rigId }) : null;
  const plan = await m.findOne(StressPlanEntity, { where: { id: run.planId }, relations: { deviceType: true } });
  const runSocket = await m.findOne(RunSocketEntity, {
    where: { runId, socketIndex: socket },
    relations: { device: { lot: { deviceType: true } } },
  });
  const tripAlarm = await m.findOne(AlarmEntity, {
    where: { runId, socketIndex: socket, kind: 'runaway-trip' },
    order: { raisedAt: 'DESC' },
  });
  return { run, rig, plan, runSocket, tripAlarm };
}

/** The socket's latch cleared in the run's record (its trip stays in the audit log and the alarm). */
export async function clearSocketTrip(m: EntityManager, runId: string, socket: number): Promise<void> {
  await m.update(RunSocketEntity, { runId, socketIndex: socket }, { tripped: false, trippedAt: null, tripReason: null });
}
