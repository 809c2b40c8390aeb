import type { AppContext } from './context';

/**
 * Background parts of the API process (MQTT ingest, scheduler, protection, mail). Each start
 * function returns its stop function; they are stopped in reverse order.
 */
export async function startFeatures(ctx: AppContext): Promise<() => Promise<void>> {
  const stops: Array<() => Promise<void> | void> = [];
  void ctx;
  return async () => {
    for (const stop of stops.reverse()) await stop();
  };
}
