/**
 * Run events: the runs module and the scheduler tell the rest of the server what happened to a
 * run. Emitted in-process on `ctx.events` as `'run-event'`, ALWAYS after the change is committed.
 * The safety/mail module turns them into alarms and e-mails; live screens may stream them.
 *
 * Shapes (every event carries type, runId, runCode, rigId, rigCode and `at`, an ISO time):
 *
 *  { type: 'state-changed', from, to, actor: 'system' | e-mail, reason: string | null }
 *      Every state change (booked→loading, …, →finished, →aborted).
 *
 *  { type: 'ambient-not-reached', heatingSince, elapsedStressH, limitH: 5, setC, lowC, highC,
 *    lastChamberC: number | null }
 *      The chamber has not come within ±3 % of set within 5 stress-clock hours of the start of
 *      heating (MIL-STD-750 general requirements §4.5). Once per heating phase. → alarm.
 *
 *  { type: 'read-point-due', readPointH, readPointIndex, stressHours, biasRemovedAt,
 *    measureBy, final: boolean }
 *      A read point was reached: bias is off (biasRemovedAt). Measure by `measureBy`
 *      (biasRemovedAt + 96 h). `final` = the end of stress (the run cools and finishes).
 *      → notify the people who asked for read-point notices.
 *
 *  { type: 'read-point-overdue', readPointH, final, biasRemovedAt, measureBy, overdueH }
 *      A read point still has no measurements MEASURE_WITHIN_H after bias came off (the run holds
 *      in read-hold, or the final read point of a cooling/finished run). Once per hold. → alarm.
 *
 *  { type: 'command-failed', cmdId, command: 'setpoint' | 'bias', attempts, error }
 *      A rig command needed by the run failed (no ack / ok:false) several times in a row. → alarm.
 */
import type { RunState } from '../../../shared/schemas/runs';
import type { AppContext } from '../../context';
import { describeErrorForLog } from '../../db/safe-logger';

export const RUN_EVENT = 'run-event';

/** Measure within this many hours of removing bias [pub: JESD22-A108 — wording not checked]. */
export const MEASURE_WITHIN_H = 96;

interface Base {
  runId: string;
  runCode: string;
  rigId: string | null;
  rigCode: string | null;
  at: string;
}

export interface StateChangedEvent extends Base {
  type: 'state-changed';
  from: RunState;
  to: RunState;
  actor: string;
  reason: string | null;
}

export interface AmbientNotReachedEvent extends Base {
  type: 'ambient-not-reached';
  heatingSince: string;
  elapsedStressH: number;
  limitH: number;
  setC: number;
  lowC: number;
  highC: number;
  lastChamberC: number | null;
}

export interface ReadPointDueEvent extends Base {
  type: 'read-point-due';
  readPointH: number;
  readPointIndex: number;
  stressHours: number;
  biasRemovedAt: string;
  measureBy: string;
  final: boolean;
}

export interface ReadPointOverdueEvent extends Base {
  type: 'read-point-overdue';
  readPointH: number;
  final: boolean;
  biasRemovedAt: string;
  measureBy: string;
  /** Hours past measureBy when noticed. */
  overdueH: number;
}

export interface CommandFailedEvent extends Base {
  type: 'command-failed';
  cmdId: string;
  command: 'setpoint' | 'bias';
  attempts: number;
  error: string;
}

export type RunEvent = StateChangedEvent | AmbientNotReachedEvent | ReadPointDueEvent | ReadPointOverdueEvent | CommandFailedEvent;

type Omit2<T> = T extends unknown ? Omit<T, 'at'> & { at?: string } : never;

/** Emit a run event (call after commit). Listener errors never reach the caller. */
export function emitRunEvent(ctx: Pick<AppContext, 'events' | 'now'>, event: Omit2<RunEvent>): RunEvent {
  const full = { ...event, at: event.at ?? ctx.now().toISOString() } as RunEvent;
  try {
    ctx.events.emit(RUN_EVENT, full);
  } catch (e) {
    console.error(`[runs] a run-event listener failed: ${describeErrorForLog(e)}`);
  }
  return full;
}
