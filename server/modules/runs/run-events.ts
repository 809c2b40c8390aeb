/**
 * Run events: the runs module and the scheduler tell the rest of the server what happened to a
 * run, on the typed bus as RUN_EVENT, ALWAYS after the change is committed. The shapes are in
 * the event map (server/events.ts); alarms, notices and the live floor listen.
 */
import { RUN_EVENT, type PendingRunEvent, type RunEvent } from '../../events';
import type { AppContext } from '../../context';
import { describeErrorForLog } from '../../db/safe-logger';

export { RUN_EVENT };
export type {
  AmbientNotReachedEvent,
  CommandFailedEvent,
  PendingRunEvent,
  ReadPointDueEvent,
  ReadPointOverdueEvent,
  RunEvent,
  StateChangedEvent,
} from '../../events';

/** Measure within this many hours of removing bias [pub: JESD22-A108 — wording not checked]. */
export { MEASURE_WITHIN_H } from '../../../shared/domain/standards';

/** Emit a run event (call after commit). Listener errors never reach the caller. */
export function emitRunEvent(ctx: Pick<AppContext, 'events' | 'now'>, event: PendingRunEvent): RunEvent {
  const full: RunEvent = { ...event, at: event.at ?? ctx.now().toISOString() };
  try {
    ctx.events.emit(RUN_EVENT, full);
  } catch (e) {
    console.error(`[runs] a run-event listener failed: ${describeErrorForLog(e)}`);
  }
  return full;
}
