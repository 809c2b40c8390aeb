/**
 * A chamber's report as it arrives (validated by the ingest, shared/mqtt/chamber.ts): stored in
 * chamber_samples (a re-sent seq changes nothing), the rig's last seen values updated, an excursion
 * of the load past what the running plan allows raised as a 'Chamber out of band' alarm (a software
 * alarm: the chamber's own over-temperature / pressure protection stays the safeguard), and the
 * scheduler asked for a pass so the run moves on at once.
 */
import type { AppContext } from '../../context';
import { CHAMBER_REPORTED } from '../../events';
import type { ChamberReport } from '../../../shared/mqtt/chamber';
import { describeErrorForLog } from '../../db/safe-logger';
import { StressPlanEntity } from '../../db/entities';
import { excursionOf } from '../runs/chamber-engine';
import { storeChamberReport, stressingRunOfChamber } from '../runs/chamber.data';

export async function recordChamberReport(ctx: AppContext, rigCode: string, report: ChamberReport, receivedAt: Date): Promise<void> {
  const stored = await ctx.ds.transaction((m) => storeChamberReport(m, rigCode, report, receivedAt));
  if (!stored) return; // not a registered chamber: the broker let it in by its credentials, but nothing is kept
  if (stored.stored) {
    ctx.events.emit(CHAMBER_REPORTED, { rigId: stored.rigId, rigCode, seq: report.seq });
    await raiseExcursion(ctx, stored.rigId, rigCode, report);
  }
  ctx.services.scheduler?.kick();
}

async function raiseExcursion(ctx: AppContext, rigId: string, rigCode: string, r: ChamberReport): Promise<void> {
  const run = await stressingRunOfChamber(ctx.ds.manager, rigId);
  if (!run) return;
  const plan = await ctx.ds.getRepository(StressPlanEntity).findOne({ where: { id: run.planId } });
  if (!plan) return;
  const what = excursionOf(plan, r.loadC);
  if (!what) return;
  await ctx.services.alarms.raise({
    kind: 'ambient-out-of-band',
    severity: 'warning',
    rigId,
    runId: run.id,
    socketIndex: null,
    title: `Chamber ${rigCode}: ${what}`,
    message: `Run ${run.code}: the chamber reported ${what} at ${r.ts}.`,
    action:
      'Check the chamber and its programme. This alarm is no substitute for the chamber’s own over-temperature and pressure protection; follow the lab’s safety rules.',
    details: { loadC: r.loadC, airC: r.airC, setpointC: r.setpointC, seq: r.seq },
  });
}

/** The ingest's hook: the report is handled in the background; a failure is logged without its values. */
export function chamberReportHandler(ctx: AppContext, log: (line: string) => void = (l) => console.log(`[chamber] ${l}`)) {
  return (rigCode: string, report: ChamberReport, receivedAt: Date): void => {
    recordChamberReport(ctx, rigCode, report, receivedAt).catch((err) =>
      log(`report from ${rigCode} not stored: ${describeErrorForLog(err)}`),
    );
  };
}
