/**
 * In-process contracts between telemetry ingest (producer) and the scheduler, live protection
 * and the live floor (consumers). Ingest emits only AFTER the batch is committed to PostgreSQL.
 */
import type { CommandAck, RigCommand, TelemetrySocketColumns } from '../../../shared/mqtt';

/**
 * ctx.events.emit(TELEMETRY_LANDED, landed) once per stored (new, not duplicate) message. The
 * sockets come as the message's columns (`socket[k]`, `caseC[k]`, … `flags[k]` = socket k; flags
 * FLAG_BIAS_ON | FLAG_TRIPPED); `socketReadings()` gives one object per socket where that is easier.
 */
export const TELEMETRY_LANDED = 'telemetry-landed';
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

/** ctx.events.emit(RIG_STATUS_CHANGED, …) when a rig goes online/offline (status message or last will). */
export const RIG_STATUS_CHANGED = 'rig-status-changed';
export interface RigStatusChanged {
  rigId: string;
  rigCode: string;
  online: boolean;
  at: Date;
}

/** Command without the envelope fields RigLink fills in. */
export type RigCommandBody = RigCommand extends infer C ? (C extends RigCommand ? Omit<C, 'v' | 'cmdId' | 'ts'> : never) : never;

/**
 * The server's way to command a rig (ctx.services.rigLink). Implemented over MQTT by the
 * telemetry module; tests may substitute a fake.
 */
export interface RigLink {
  /**
   * Publish a command (QoS 1) and wait for the rig's ack on command-acks. Pass a stable `cmdId`
   * (e.g. `run:<id>:heat:<n>`) to make retries idempotent: the rig applies a cmdId once.
   * Rejects on timeout (default 10 s) or when the rig answers ok:false.
   */
  send(rigCode: string, command: RigCommandBody, opts?: { cmdId?: string; timeoutMs?: number }): Promise<CommandAck>;
  connected(): boolean;
  /**
   * Ask the broker to disconnect every client of this rig at once (credentials revoked or
   * rotated). Resolves true when the request went out now, false when it waits for a reconnect.
   * Optional so simple fakes need not implement it.
   */
  revoke?(rigCode: string): Promise<boolean>;
  /**
   * The highest telemetry seq this server has received from the rig so far (stored or not yet),
   * null before any. Read when an ack arrives: the rig sends telemetry and acks over one connection,
   * so a report with a higher seq was taken after the rig applied the command. Optional for fakes.
   */
  seqSeen?(rigCode: string): number | null;
}

export const RIG_LINK = 'rigLink';
