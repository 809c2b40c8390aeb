/**
 * Trip delivery: the trip command to the rig over RigLink (the same cmdId on every attempt, so the
 * rig acts on it once), the socket recorded as tripped, the critical alarm, and its escalation when
 * the rig does not confirm (the operator must remove bias at the rig). A command that failed is
 * resent on a later sample while the socket is still energised (the monitor asks: judge.ts).
 *
 * A software trip complements, and never replaces, the rig's hardware interlocks.
 */
import type { ProtectionDevice, SocketAssessment, SocketSample } from '../../../shared/safety/protection';
import type { AppContext } from '../../context';
import type { AlarmsService } from '../alarms/alarms.service';
import type { RigLink } from '../telemetry/contracts';
import { TRIP_ACTION, confirmedLaterMessage, tripAlarm, tripOutcome, tripRecordReason, type SocketPlace } from './alarm-text';
import type { ConditionAlarms } from './conditions';
import type { SocketState } from './judge';
import { markSocketTripped } from './protection.data';

export type TripOutcome = { ok: true } | { ok: false; error: string };

/** Stable trip command id: `trip:<rig>:<socket>:<runId>` (":n" from the second trip of a socket in a run). */
export function tripCmdId(rigCode: string, socket: number, runId: string | null, previousTrips = 0): string {
  const suffix = previousTrips > 0 ? `:${previousTrips + 1}` : '';
  const id = `trip:${rigCode}:${socket}:${runId ?? 'norun'}${suffix}`;
  if (id.length <= 64) return id;
  // Long rig codes: the run id without dashes still identifies it (cmdId is at most 64 characters).
  return `trip:${rigCode}:${socket}:${(runId ?? 'norun').replace(/-/g, '').slice(0, 64 - 8 - rigCode.length - String(socket).length - suffix.length)}${suffix}`;
}

export interface TripDeliveryOptions {
  /** Attempts to deliver a trip command (same cmdId each time). */
  tripAttempts: number;
  tripTimeoutMs: number;
}

/** One trip to deliver: where, which run, which command, and what the judge saw. */
export interface TripOrder {
  place: SocketPlace;
  run: { runId: string | null; runCode: string | null };
  cmdId: string;
  /** The reason sent to the rig. */
  reason: string;
  assessment: SocketAssessment;
  device: ProtectionDevice;
  serial: string | null;
  sample: SocketSample;
  at: Date;
}

export class TripDelivery {
  constructor(
    private readonly ctx: AppContext,
    /** The rig link of this server, when one runs (looked up at each attempt). */
    private readonly link: () => RigLink | undefined,
    private readonly conditions: ConditionAlarms,
    private readonly alarms: () => AlarmsService,
    private readonly opts: TripDeliveryOptions,
    private readonly stats: { tripSendFailures: number },
  ) {}

  /**
   * The command first (nothing else may delay it); then, in parallel, the socket recorded as
   * tripped and the alarm, which is raised again with the rig's answer. The socket's state follows
   * the delivery. Resolves when all of it is done.
   */
  deliver(st: SocketState, order: TripOrder): Promise<void> {
    const { place, cmdId } = order;
    const delivery = this.send(place.rigCode, place.socket, order.reason, cmdId).then((r) => {
      if (st.tripCmdId === cmdId) st.tripDelivery = r.ok ? 'confirmed' : 'failed';
      return r;
    });
    const alarm = tripAlarm(place, order.run, cmdId, order.assessment, order.device, order.sample, order.serial);
    const record = async () => {
      if (order.run.runId) await markSocketTripped(this.ctx, order.run.runId, place.socket, order.at, tripRecordReason(order.assessment));
      await this.conditions.clear('runaway-warning', place.rigId, place.socket, { reason: 'superseded by a trip' });
      await this.conditions.raise(alarm.input, true);
      const outcome = await delivery;
      await this.conditions.raise(tripOutcome(alarm, outcome), true);
    };
    return record();
  }

  /** The same command again; once confirmed, the live trip alarm says so. */
  async resend(place: SocketPlace, runId: string | null, st: SocketState): Promise<void> {
    const cmdId = st.tripCmdId;
    if (!cmdId) return;
    st.tripDelivery = 'sending';
    const r = await this.send(place.rigCode, place.socket, st.tripReason, cmdId);
    if (st.tripCmdId !== cmdId) return;
    st.tripDelivery = r.ok ? 'confirmed' : 'failed';
    if (!r.ok) return;
    this.conditions.touch('runaway-trip', place.rigId, place.socket);
    const current = await this.alarms().list({ status: 'all', rigId: place.rigId, kind: 'runaway-trip', limit: 100, offset: 0 });
    const a = current.items.find((x) => x.socketIndex === place.socket && x.active);
    if (!a) return;
    await this.alarms().raise({
      kind: 'runaway-trip',
      severity: 'critical',
      rigId: place.rigId,
      runId: runId ?? a.runId,
      socketIndex: place.socket,
      title: a.title,
      message: confirmedLaterMessage(a.message),
      action: TRIP_ACTION,
      details: { ...a.details, command: 'confirmed', commandError: null },
    });
  }

  /** Up to tripAttempts tries with the same cmdId; an explicit refusal is final. */
  private async send(rigCode: string, socket: number, reason: string, cmdId: string): Promise<TripOutcome> {
    let error = 'no rig link is running in this server';
    for (let attempt = 1; attempt <= this.opts.tripAttempts; attempt++) {
      const link = this.link();
      if (!link) break;
      try {
        const ack = await link.send(rigCode, { type: 'trip', socket, reason }, { cmdId, timeoutMs: this.opts.tripTimeoutMs });
        if (ack.ok) return { ok: true };
        error = ack.error ?? 'the rig refused the command';
        break; // an explicit refusal will not change on a resend of the same cmdId
      } catch (err) {
        error = err instanceof Error ? err.message : String(err);
      }
    }
    this.stats.tripSendFailures++;
    console.error(`[protection] trip ${cmdId} not confirmed: ${error}`);
    return { ok: false, error };
  }
}
