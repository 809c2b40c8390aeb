import type { AppContext } from './context';
import { startTelemetry, type TelemetryFeatureOptions } from './modules/telemetry/telemetry.feature';
import { startProtection } from './modules/protection/start';
import { startScheduler } from './modules/scheduler/scheduler';
import { startReplanning } from './modules/replan/replan.feature';
import { chamberReportHandler } from './modules/chamber/chamber-reports';

/**
 * Background parts of the API process (MQTT ingest, scheduler, protection, mail). Each start
 * function fills its typed slot in ctx.services (rigLink, telemetryIngest, protection, scheduler)
 * and returns its stop function, which clears it; they are stopped in reverse order.
 */
export async function startFeatures(
  ctx: AppContext,
  /** The MQTT session of an elected leader (server/cluster/workers.ts). */
  session: Pick<TelemetryFeatureOptions, 'clientId' | 'persistentSession' | 'processId'> = {},
): Promise<() => Promise<void>> {
  const stops: Array<() => Promise<void> | void> = [];
  stops.push(
    await startTelemetry(ctx, {
      ...session,
      rollupFlushMs: ctx.config.rollupFlushMs,
      maxBatch: ctx.config.ingestMaxBatch,
      maxInFlight: ctx.config.ingestInFlight,
      onChamber: chamberReportHandler(ctx), // chambers' own reports (server/modules/chamber)
    }),
  ); // first: the others use ctx.services.rigLink
  stops.push(await startProtection(ctx)); // live protection, alarms, notifications, e-mail
  stops.push(startScheduler(ctx)); // runs: heating, accrual, read points, cooling (node-cron, every second)
  stops.push(startReplanning(ctx)); // re-plan proposals when a rig goes offline or comes back
  return async () => {
    for (const stop of stops.reverse()) await stop();
  };
}
