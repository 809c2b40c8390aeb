/**
 * The API process's in-process events, typed by one map. `EventBus` is Node's own generic
 * EventEmitter over `EmberlotEvents`, so emitting or listening to a name outside the map, or with
 * the wrong payload, fails the type-check; tests/unit/event-map.test.ts reads the server's source
 * and fails when a name in the map has no emitter or no listener.
 *
 * Every event is emitted AFTER the change it reports is committed to PostgreSQL.
 */
import { EventEmitter } from 'node:events';
import type { Alarm } from '../shared/schemas/alarms';
import type { RunState } from '../shared/schemas/runs';
import type { TelemetrySocketColumns } from '../shared/mqtt';

/** An alarm was raised, updated, cleared or acknowledged (alarms.service.ts). The rig is `alarm.rigId`. */
export const ALARM_EVENT = 'alarm';
/** Something happened to a run (runs + scheduler, see `RunEvent`). */
export const RUN_EVENT = 'run-event';
/** Once per stored (new, not duplicate) telemetry message (ingest). */
export const TELEMETRY_LANDED = 'telemetry-landed';
/** Once per stored (new, not duplicate) chamber report (server/modules/chamber/chamber-reports.ts). */
export const CHAMBER_REPORTED = 'chamber-reported';
/** A rig went online or offline (status message, last will, or the offline sweep). */
export const RIG_STATUS_CHANGED = 'rig-status-changed';
/**
 * A session ended (sign-out, auth.routes.ts): open live streams bound to it end at once. Streams of a
 * deactivated user, or of a session that expired or was deleted another way, end at the floor stream's
 * next session check (floor.stream.ts, SESSION_CHECK_MS).
 */
export const SESSION_ENDED = 'session-ended';
export interface SessionEnded {
  sid: string;
}

export type AlarmChange = 'raised' | 'updated' | 'cleared' | 'acknowledged';
export interface AlarmEvent {
  change: AlarmChange;
  alarm: Alarm;
}

/*
 * Run events. Every one carries type, runId, runCode, rigId, rigCode and `at` (ISO time):
 *  state-changed       every state change (booked→loading, …, →finished, →aborted).
 *  ambient-not-reached the chamber has not come within ±3 % of set within 5 stress-clock hours of
 *                      the start of heating (MIL-STD-750 general requirements §4.5). Once per
 *                      heating phase. → alarm.
 *  read-point-due      a read point was reached: bias is off (biasRemovedAt); measure by
 *                      `measureBy` (biasRemovedAt + 96 h); `final` = the end of stress. → notices.
 *  read-point-overdue  a read point still has no measurements MEASURE_WITHIN_H after bias came off.
 *                      Once per hold. → alarm.
 *  command-failed      a rig command needed by the run was refused (ok:false, at once) or not answered
 *                      (after a few attempts); the run goes into fault when it was running. → alarm.
 */
interface RunEventBase {
  runId: string;
  runCode: string;
  rigId: string | null;
  rigCode: string | null;
  at: string;
}

export interface StateChangedEvent extends RunEventBase {
  type: 'state-changed';
  from: RunState;
  to: RunState;
  actor: string;
  reason: string | null;
}

export interface AmbientNotReachedEvent extends RunEventBase {
  type: 'ambient-not-reached';
  heatingSince: string;
  elapsedStressH: number;
  limitH: number;
  setC: number;
  lowC: number;
  highC: number;
  lastChamberC: number | null;
}

export interface ReadPointDueEvent extends RunEventBase {
  type: 'read-point-due';
  readPointH: number;
  readPointIndex: number;
  stressHours: number;
  biasRemovedAt: string;
  measureBy: string;
  final: boolean;
}

export interface ReadPointOverdueEvent extends RunEventBase {
  type: 'read-point-overdue';
  readPointH: number;
  final: boolean;
  biasRemovedAt: string;
  measureBy: string;
  /** Hours past measureBy when noticed. */
  overdueH: number;
}

export interface CommandFailedEvent extends RunEventBase {
  type: 'command-failed';
  cmdId: string;
  command: 'setpoint' | 'bias';
  /** For bias: on or off. */
  biasOn?: boolean;
  attempts: number;
  error: string;
  /** The rig answered ok:false (else: it did not answer). */
  refused?: boolean;
  /** The run went into the fault state because of it. */
  faulted?: boolean;
}

export type RunEvent = StateChangedEvent | AmbientNotReachedEvent | ReadPointDueEvent | ReadPointOverdueEvent | CommandFailedEvent;

/** A run event before it is emitted: `at` defaults to the clock's now (emitRunEvent). */
export type PendingRunEvent = RunEvent extends infer E ? (E extends RunEvent ? Omit<E, 'at'> & { at?: string } : never) : never;

/**
 * A stored telemetry message. The sockets come as the message's columns (`socket[k]`, `caseC[k]`,
 * … `flags[k]` = socket k; flags FLAG_BIAS_ON | FLAG_TRIPPED); `socketReadings()` gives one object
 * per socket where that is easier.
 */
export interface TelemetryLanded extends TelemetrySocketColumns {
  rigId: string;
  rigCode: string;
  seq: number;
  ts: Date;
  stressClockS: number;
  chamberC: number;
  humidityPct: number | null;
  setpointC: number;
}

export interface ChamberReported {
  rigId: string;
  rigCode: string;
  seq: number;
}

export interface RigStatusChanged {
  rigId: string;
  rigCode: string;
  online: boolean;
  at: Date;
}

/** Every in-process event: name → listener arguments. */
export interface EmberlotEvents {
  [ALARM_EVENT]: [AlarmEvent];
  [RUN_EVENT]: [RunEvent];
  [TELEMETRY_LANDED]: [TelemetryLanded];
  [RIG_STATUS_CHANGED]: [RigStatusChanged];
  [CHAMBER_REPORTED]: [ChamberReported];
  [SESSION_ENDED]: [SessionEnded];
}

export type EmberlotEventName = keyof EmberlotEvents;
export type EmberlotListener<K extends EmberlotEventName> = (...args: EmberlotEvents[K]) => void;

export type EventBus = EventEmitter<EmberlotEvents>;

export function createEventBus(): EventBus {
  const bus = new EventEmitter<EmberlotEvents>();
  bus.setMaxListeners(1000);
  return bus;
}
