/**
 * In-process contracts between telemetry ingest (producer) and the scheduler, live protection
 * and the live floor (consumers). Ingest emits only AFTER the batch is committed to PostgreSQL.
 */
import type { CommandAck, RigCommand } from '../../../shared/mqtt';

// The events ingest emits (TELEMETRY_LANDED, RIG_STATUS_CHANGED) and their payloads live in the
// one event map, server/events.ts.
export { RIG_STATUS_CHANGED, TELEMETRY_LANDED, type RigStatusChanged, type TelemetryLanded } from '../../events';

/** Command without the envelope fields RigLink fills in. */
export type RigCommandBody = RigCommand extends infer C ? (C extends RigCommand ? Omit<C, 'v' | 'cmdId' | 'ts'> : never) : never;

/**
 * The server's way to command a rig (ctx.services.rigLink, typed in server/composition.ts). Implemented over MQTT by the
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
  /** Commands sent and not yet answered (the telemetry stats screen). Optional for fakes. */
  pendingCount?(): number;
}
