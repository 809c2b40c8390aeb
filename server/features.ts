import type { AppContext } from './context';
import { startTelemetry } from './modules/telemetry/telemetry.feature';

/**
 * Background parts of the API process (MQTT ingest, scheduler, protection, mail). Each start
 * function returns its stop function; they are stopped in reverse order.
 */
export async function startFeatures(ctx: AppContext): Promise<() => Promise<void>> {
  const stops: Array<() => Promise<void> | void> = [];
  void ctx;
  stops.push(await startTelemetry(ctx)); // first: the others use ctx.services.rigLink
  return async () => {
    for (const stop of stops.reverse()) await stop();
  };
}
