/**
 * Protection's writes to the database (its reads of a rig's runs are in run-context.ts; its alarms
 * go through the alarms service).
 */
import type { AppContext } from '../../context';
import { RunSocketEntity } from '../../db/entities';

/** Mark a run's socket tripped, with the time and reason. */
export async function markSocketTripped(ctx: AppContext, runId: string, socket: number, at: Date, reason: string): Promise<void> {
  await ctx.ds.getRepository(RunSocketEntity).update({ runId, socketIndex: socket }, { tripped: true, trippedAt: at, tripReason: reason });
}
