/**
 * Live protection: consumes TELEMETRY_LANDED (each stored telemetry message) and RIG_STATUS_CHANGED,
 * and for every energised socket asks the socket judge (judge.ts: the runaway assessment of
 * shared/safety/protection, bias, leakage and chamber checks, all without I/O) what to do:
 * 'trip' → trip delivery (trip-delivery.ts: command over RigLink with a stable cmdId, run_sockets
 * marked tripped, critical alarm, escalation when unconfirmed); a warning or condition → an alarm
 * worded by alarm-text.ts, raised or cleared through conditions.ts. The rig-offline alarm comes
 * from RIG_STATUS_CHANGED.
 * Messages of one rig are handled strictly in order (one promise chain per rig); rigs run independently.
 *
 * A software trip complements, and never replaces, the rig's hardware interlocks.
 *
 * Device data per socket: the loaded device's type (run_sockets → devices → lots → device_types of
 * the rig's active run); a socket missing from the socket map uses the plan's part; with no active
 * run an energised socket is judged with conservative defaults (`defaultDevice`, Tj max 150 °C,
 * θjc 2 °C/W) — set `defaultDevice: null` to skip such sockets instead.
 */
import {
  DEFAULT_PROTECTION_OPTIONS,
  type ProtectionDevice,
  type ProtectionOptions,
  type SocketAssessment,
  type SocketSample,
} from '../../../shared/safety/protection';
// From the modules themselves, not shared/mqtt's index: its re-exports compile to one shared keyed
// getter, which V8 does not inline (it was ~4 % of the ingest's CPU in the per-socket loops).
import { FLAG_TRIPPED } from '../../../shared/mqtt/payloads';
import type { AlarmKindName } from '../../../shared/schemas/alarms';
import type { AppContext } from '../../context';
import type { RunState } from '../../db/entities';
import { RIG_STATUS_CHANGED, RUN_EVENT, TELEMETRY_LANDED, type RigStatusChanged, type RunEvent, type TelemetryLanded } from '../../events';
import {
  ambientAlarm,
  biasAlarm,
  leakageAlarm,
  rigOfflineAlarm,
  runawayWarningAlarm,
  tripCommandReason,
  type SocketPlace,
} from './alarm-text';
import { ConditionAlarms } from './conditions';
import { SocketJudge, type DeviceInfo, type RigState, type SocketState } from './judge';
import { hasActiveRun, loadRunContext, type RunContext } from './run-context';
import { TripDelivery, tripCmdId } from './trip-delivery';
import { TurnGate } from './turns';

export { AMBIENT_ACTION, BIAS_ACTION, LEAKAGE_ACTION, OFFLINE_ACTION, TRIP_ACTION, WARN_ACTION } from './alarm-text';
export { tripCmdId } from './trip-delivery';

export interface ProtectionMonitorOptions {
  /** Passed to assessSocket. */
  protection: Partial<ProtectionOptions>;
  /** Samples kept per socket at most (besides the look-back window). */
  historyMaxSamples: number;
  /** Device data for an energised socket on a rig without an active run; null = skip such sockets. */
  defaultDevice: ProtectionDevice | null;
  /** Chamber band while stressing: the plan's band (kelvin), but never narrower than ± this many °C. */
  ambientBandMinC: number;
  /** Consecutive samples a condition (chamber band, bias) must hold before it raises or clears. */
  debounceSamples: number;
  /**
   * Leakage jump: under reverse bias a socket's current grew by at least this factor from one sample
   * to the next, beyond what its case-temperature change explains (leakage doubles per 10 °C).
   */
  leakageJumpFactor: number;
  /** Currents below this (A) are too small to judge a jump on. */
  leakageFloorA: number;
  /**
   * Consecutive 'warn' assessments before a runaway warning is raised. A warning is advice, and a
   * settling socket can show one stray trend warning just after bias is applied; trips are never
   * delayed.
   */
  warnAfterSamples: number;
  /** Consecutive calm samples before a runaway warning counts as cleared. */
  warnClearSamples: number;
  /** An ongoing alarm's numbers are refreshed at most this often (ms of wall time). */
  refreshMs: number;
  /** Run context cache lifetime (ms); run events drop it sooner. */
  runCacheMs: number;
  /** Attempts to deliver a trip command (same cmdId each time). */
  tripAttempts: number;
  tripTimeoutMs: number;
}

export const DEFAULT_MONITOR_OPTIONS: ProtectionMonitorOptions = {
  protection: {},
  historyMaxSamples: 600,
  defaultDevice: { tjMaxC: 150, thetaJcCPerW: 2 },
  ambientBandMinC: 1,
  debounceSamples: 2,
  leakageJumpFactor: 5,
  leakageFloorA: 1e-9,
  warnAfterSamples: 3,
  warnClearSamples: 3,
  refreshMs: 5000,
  runCacheMs: 15_000,
  tripAttempts: 3,
  tripTimeoutMs: 5000,
};

/** Telemetry messages judged per turn of the event loop when many wait (turns.ts). */
const MESSAGES_PER_TURN = 6;

export class ProtectionMonitor {
  readonly opts: ProtectionMonitorOptions;
  private readonly rigs = new Map<string, RigState>();
  private readonly runs = new Map<string, { run: RunContext | null; at: number }>();
  private readonly chains = new Map<string, Promise<void>>();
  private readonly pending = new Set<Promise<unknown>>();
  private readonly listeners: Array<() => void> = [];
  private started = false;
  readonly stats = { messages: 0, staleSkipped: 0, assessments: 0, trips: 0, tripSendFailures: 0, warnings: 0, errors: 0 };
  /** Every trip decision, for tests and the log. */
  readonly tripLog: Array<{
    rigCode: string;
    socket: number;
    runId: string | null;
    cmdId: string;
    assessment: SocketAssessment;
    sample: SocketSample;
    at: Date;
  }> = [];

  private readonly judge: SocketJudge;
  /** The alarms this monitor believes active, raised and cleared through it. */
  private readonly conditions: ConditionAlarms;
  private readonly trips: TripDelivery;
  /** Where onTelemetry leaves SocketJudge.touch's sum (so the reads stay). */
  private warmSink = 0;
  /** A few messages per turn of the event loop (turns.ts). */
  private queued = 0;
  private readonly turns = new TurnGate(MESSAGES_PER_TURN, () => this.queued);
  /** withIdentifiedTheta's per-socket devices. */
  private readonly thermalDevices = new Map<string, { base: DeviceInfo; theta: number; info: DeviceInfo }>();

  constructor(
    private readonly ctx: AppContext,
    opts: Partial<ProtectionMonitorOptions> = {},
  ) {
    this.opts = { ...DEFAULT_MONITOR_OPTIONS, ...opts, protection: { ...DEFAULT_MONITOR_OPTIONS.protection, ...(opts.protection ?? {}) } };
    this.judge = new SocketJudge({ ...this.opts, protection: { ...DEFAULT_PROTECTION_OPTIONS, ...this.opts.protection } });
    const alarms = () => this.alarms;
    this.conditions = new ConditionAlarms(alarms, this.opts.refreshMs);
    this.trips = new TripDelivery(ctx, () => this.rigLink, this.conditions, alarms, this.opts, this.stats);
  }

  private get alarms() {
    return this.ctx.services.alarms;
  }

  private get rigLink() {
    return this.ctx.services.rigLink;
  }

  async start(): Promise<void> {
    if (this.started) return;
    this.started = true;
    // Conditions still active from before a restart, so they can clear when seen healthy again.
    await this.conditions.load();
    const events = this.ctx.events;
    const onLanded = (m: TelemetryLanded) => this.enqueue(m.rigId, () => this.onTelemetry(m));
    const onStatus = (s: RigStatusChanged) => this.enqueue(s.rigId, () => this.onStatus(s));
    const onRunEvent = (e: RunEvent) => {
      const rigId = (e as { rigId?: unknown } | null)?.rigId;
      this.invalidateRun(typeof rigId === 'string' ? rigId : undefined);
      if (e?.type === 'state-changed' && e.rigId) {
        const rigId = e.rigId;
        this.enqueue(rigId, () => this.onRunStateChanged(rigId, e.to));
      }
    };
    events.on(TELEMETRY_LANDED, onLanded);
    events.on(RIG_STATUS_CHANGED, onStatus);
    events.on(RUN_EVENT, onRunEvent);
    this.listeners.push(
      () => events.off(TELEMETRY_LANDED, onLanded),
      () => events.off(RIG_STATUS_CHANGED, onStatus),
      () => events.off(RUN_EVENT, onRunEvent),
    );
  }

  async stop(): Promise<void> {
    for (const off of this.listeners) off();
    this.listeners.length = 0;
    await this.idle();
    this.started = false;
  }

  /** Messages and rig events taken and not yet handled, over all rigs. */
  get backlog(): number {
    return this.queued;
  }

  /** Resolves once every queued message and every trip in flight has been handled. */
  async idle(): Promise<void> {
    while (this.chains.size > 0 || this.pending.size > 0) {
      await Promise.allSettled([...this.chains.values(), ...this.pending]);
    }
  }

  /** Forget a rig's run context (the run changed). */
  invalidateRun(rigId?: string): void {
    if (rigId) this.runs.delete(rigId);
    else this.runs.clear();
  }

  private enqueue(rigId: string, job: () => Promise<void>): void {
    const prev = this.chains.get(rigId) ?? Promise.resolve();
    this.queued++;
    const next = prev
      .then(job)
      .catch((err) => {
        this.stats.errors++;
        console.error(`[protection] rig ${rigId}:`, err instanceof Error ? err.message : err);
      })
      .finally(() => {
        this.queued--;
        if (this.chains.get(rigId) === next) this.chains.delete(rigId);
      });
    this.chains.set(rigId, next);
  }

  private track<T>(p: Promise<T>): void {
    const t = p
      .catch((err) => {
        this.stats.errors++;
        console.error('[protection]', err instanceof Error ? err.message : err);
      })
      .finally(() => this.pending.delete(t));
    this.pending.add(t);
  }

  private async runFor(rigId: string): Promise<RunContext | null> {
    const cached = this.runs.get(rigId);
    const now = Date.now();
    if (cached && now - cached.at < this.opts.runCacheMs) return cached.run;
    const run = await loadRunContext(this.ctx, rigId);
    // Keep the in-memory trip counts of a run we already knew (they may be ahead of the database).
    if (run && cached?.run?.runId === run.runId) {
      for (const [i, s] of run.sockets) s.trips = Math.max(s.trips, cached.run.sockets.get(i)?.trips ?? 0);
    }
    this.runs.set(rigId, { run, at: now });
    return run;
  }

  private rigState(rigId: string, rigCode: string): RigState {
    let r = this.rigs.get(rigId);
    if (!r) this.rigs.set(rigId, (r = this.judge.newRig(rigCode)));
    r.rigCode = rigCode;
    return r;
  }

  // -------------------------------------------------------------------------------------------
  // Rig and run events

  /** A run left stressing or ended: conditions judged against its plan no longer apply. */
  private async onRunStateChanged(rigId: string, to: RunState): Promise<void> {
    this.runs.delete(rigId);
    const kinds: AlarmKindName[] = [];
    if (to !== 'stressing') kinds.push('bias-out-of-tolerance', 'ambient-out-of-band');
    if (to === 'finished' || to === 'aborted') kinds.push('leakage-jump', 'runaway-warning', 'runaway-trip');
    this.judge.runStateChanged(this.rigs.get(rigId), to);
    await this.conditions.clearRig(rigId, kinds, { runState: to });
  }

  private async onStatus(s: RigStatusChanged): Promise<void> {
    const rig = this.rigState(s.rigId, s.rigCode);
    if (s.online) {
      await this.conditions.clear('rig-offline', s.rigId, null, { onlineAt: s.at.toISOString() });
      return;
    }
    this.judge.rigWentOffline(rig);
    if (!(await hasActiveRun(this.ctx, s.rigId))) return;
    this.runs.delete(s.rigId);
    const run = await this.runFor(s.rigId);
    await this.conditions.raise(rigOfflineAlarm(s, run), true);
  }

  // -------------------------------------------------------------------------------------------
  // Telemetry

  private async onTelemetry(m: TelemetryLanded): Promise<void> {
    // A committed batch lands hundreds of messages at once; judged back to back they would hold up
    // HTTP, MQTT and the ingest's next statements. A few per turn of the event loop instead.
    await this.turns.next();
    this.stats.messages++;
    const rig = this.rigState(m.rigId, m.rigCode);
    if (!this.judge.admit(rig, m)) {
      this.stats.staleSkipped++;
      return;
    }
    // Telemetry proves the rig is back.
    if (this.conditions.isActive('rig-offline', m.rigId, null))
      await this.conditions.clear('rig-offline', m.rigId, null, { telemetryAt: m.ts.toISOString() });

    const run = await this.runFor(m.rigId);
    const baselineTjC = this.judge.peerBaseline(m, run);
    const spreadC = this.judge.peerSpreadC;
    this.warmSink = this.judge.touch(rig, m);
    for (let k = 0; k < m.socket.length; k++) {
      // Most sockets are judged without waiting on anything: only an alarm to raise or clear, or a
      // bias/leakage check that writes, hands back a promise.
      const pending = this.onSocket(m, rig, run, k, baselineTjC, spreadC);
      if (pending) await pending;
    }
    await this.onAmbient(m, rig, run);
  }

  /**
   * One socket of one message. It hands back a promise only when it has to wait — an alarm to raise
   * or clear, a bias or leakage check that writes — and otherwise finishes at once: a promise and a
   * microtask for each of thousands of sockets per second was a good part of the ingest's CPU. The
   * steps and their order are the same either way.
   */
  private onSocket(
    m: TelemetryLanded,
    rig: RigState,
    run: RunContext | null,
    k: number,
    baselineTjC: number | undefined,
    spreadC: number,
  ): Promise<void> | undefined {
    const i = m.socket[k];
    const st = this.judge.socketState(rig, i);
    const sample = this.judge.sampleAt(m, k);
    if ((m.flags[k] & FLAG_TRIPPED) !== 0) {
      this.judge.latchHeld(st);
      if (this.conditions.isActive('runaway-warning', m.rigId, i))
        return this.conditions.clear('runaway-warning', m.rigId, i, { reason: 'socket tripped' });
      return undefined;
    }
    if (this.judge.latchReset(st)) {
      // The trip's condition is over (the alarm stays until acknowledged).
      return this.conditions
        .clear('runaway-trip', m.rigId, i, { reason: 'trip latch reset' })
        .then(() => this.judgeSocket(m, rig, run, i, st, sample, baselineTjC, spreadC));
    }
    return this.judgeSocket(m, rig, run, i, st, sample, baselineTjC, spreadC);
  }

  /** The runaway verdict of an untripped socket, then its bias and leakage checks. */
  private judgeSocket(
    m: TelemetryLanded,
    rig: RigState,
    run: RunContext | null,
    i: number,
    st: SocketState,
    sample: SocketSample,
    baselineTjC: number | undefined,
    spreadC: number,
  ): Promise<void> | undefined {
    if (this.judge.tripNeedsResend(st, sample)) {
      // Still energised and the command never got through: try again with the same cmdId.
      this.track(this.trips.resend({ rigId: m.rigId, rigCode: m.rigCode, socket: i }, run?.runId ?? null, st));
    }
    const dev = this.withIdentifiedTheta(m.rigId, i, this.judge.deviceFor(run, i));
    const v = this.judge.runaway(st, dev, sample, baselineTjC, spreadC);
    let alarm: Promise<void> | undefined;
    if (v !== 'not-judged') this.stats.assessments++;
    if (v === 'not-judged' || v === 'calm') {
      // nothing to report
    } else if (v === 'calm-long') {
      if (dev && this.conditions.isActive('runaway-warning', m.rigId, i)) {
        alarm = this.conditions.clear('runaway-warning', m.rigId, i, {
          reason: this.judge.calmAssessment(st, dev, baselineTjC, spreadC).reason,
        });
      }
    } else if (dev) {
      if (v.action === 'trip') this.startTrip(m, run, i, st, sample, v, dev);
      if (this.judge.warningDue(st, v)) {
        this.stats.warnings++;
        alarm = this.conditions.raise(runawayWarningAlarm(placeOf(m, i), run?.runId ?? null, v, dev.device, sample, dev.serial));
      }
    }
    return alarm ? alarm.then(() => this.checkRunSocket(m, run, i, st, sample)) : this.checkRunSocket(m, run, i, st, sample);
  }

  /**
   * The socket's device with its identified θca (the thermal tracker's latest good fit), when there
   * is one: protection's loop gain may then use it where it is larger (shared/thermal/rules.ts).
   * Kept per socket so most samples reuse the same object.
   */
  private withIdentifiedTheta(rigId: string, socket: number, dev: DeviceInfo | null): DeviceInfo | null {
    const theta = this.ctx.services.thermalTracker?.identifiedThetaCa(rigId, socket) ?? null;
    if (!dev || theta === null) return dev;
    const key = `${rigId}:${socket}`;
    const memo = this.thermalDevices.get(key);
    if (memo && memo.base === dev && memo.theta === theta) return memo.info;
    const info: DeviceInfo = {
      device: { ...dev.device, identifiedThetaCaCPerW: theta },
      serial: dev.serial,
      partNumber: dev.partNumber,
      // The run socket's trip count moves on the original (startTrip): read it through.
      get trips() {
        return dev.trips;
      },
    };
    this.thermalDevices.set(key, { base: dev, theta, info });
    return info;
  }

  /** Bias, then leakage (each may write), then remember this sample for the next one. */
  private checkRunSocket(
    m: TelemetryLanded,
    run: RunContext | null,
    i: number,
    st: SocketState,
    sample: SocketSample,
  ): Promise<void> | undefined {
    if (!run || st.tripCmdId) return this.judge.remember(st, sample);
    const bias = this.onBias(m, run, i, st, sample);
    return bias
      ? bias.then(() => this.checkLeakageThenRemember(m, run, i, st, sample))
      : this.checkLeakageThenRemember(m, run, i, st, sample);
  }

  private checkLeakageThenRemember(
    m: TelemetryLanded,
    run: RunContext,
    i: number,
    st: SocketState,
    sample: SocketSample,
  ): Promise<void> | undefined {
    const leak = this.onLeakage(m, run, i, st, sample);
    return leak ? leak.then(() => this.judge.remember(st, sample)) : this.judge.remember(st, sample);
  }

  /** Returns a promise only when it raises or clears an alarm (most samples: nothing to wait for). */
  private onBias(m: TelemetryLanded, run: RunContext, i: number, st: SocketState, sample: SocketSample): Promise<void> | undefined {
    const v = this.judge.bias(run, st, sample);
    if (v === undefined) return undefined;
    if (v === 'clear-due') {
      return this.conditions.isActive('bias-out-of-tolerance', m.rigId, i)
        ? this.conditions.clear('bias-out-of-tolerance', m.rigId, i, { vV: sample.vV, iA: sample.iA })
        : undefined;
    }
    return this.conditions.raise(biasAlarm(placeOf(m, i), run, v));
  }

  /** Returns a promise only when it raises or clears an alarm. */
  private onLeakage(m: TelemetryLanded, run: RunContext, i: number, st: SocketState, sample: SocketSample): Promise<void> | undefined {
    const active = st.leakBaseline !== null && this.conditions.isActive('leakage-jump', m.rigId, i);
    const v = this.judge.leakage(run, st, sample, active);
    if (v === undefined) return undefined;
    if (v === 'clear') return this.conditions.clear('leakage-jump', m.rigId, i, { iA: sample.iA });
    return this.conditions.raise(leakageAlarm(placeOf(m, i), run, v), true);
  }

  private async onAmbient(m: TelemetryLanded, rig: RigState, run: RunContext | null): Promise<void> {
    const v = this.judge.ambient(rig, run, m.chamberC);
    if (v === undefined) return;
    if (v === 'no-stress') {
      if (this.conditions.isActive('ambient-out-of-band', m.rigId, null)) {
        await this.conditions.clear('ambient-out-of-band', m.rigId, null, { reason: run ? `run ${run.state}` : 'no active run' });
      }
    } else if (v === 'clear-due') {
      if (this.conditions.isActive('ambient-out-of-band', m.rigId, null))
        await this.conditions.clear('ambient-out-of-band', m.rigId, null, { chamberC: m.chamberC });
    } else if (run) {
      await this.conditions.raise(ambientAlarm(m, run, v));
    }
  }

  // -------------------------------------------------------------------------------------------
  // Trip

  /** Decided: the command id, the socket's state and the log now; delivery and records in the background. */
  private startTrip(
    m: TelemetryLanded,
    run: RunContext | null,
    socket: number,
    st: SocketState,
    sample: SocketSample,
    a: SocketAssessment,
    dev: DeviceInfo,
  ): void {
    const runSocket = run?.sockets.get(socket);
    // The socket's own run when several runs share the oven; else the rig's run.
    const runId = runSocket?.runId ?? run?.runId ?? null;
    const runCode = runSocket?.runCode ?? run?.runCode ?? null;
    const cmdId = tripCmdId(m.rigCode, socket, runId, dev.trips);
    const reason = tripCommandReason(a);
    this.judge.tripIssued(st, cmdId, reason);
    if (runSocket) runSocket.trips += 1;
    this.stats.trips++;
    const at = this.ctx.now();
    this.tripLog.push({ rigCode: m.rigCode, socket, runId, cmdId, assessment: a, sample, at });
    if (this.tripLog.length > 1000) this.tripLog.shift();
    this.track(
      this.trips.deliver(st, {
        place: placeOf(m, socket),
        run: { runId, runCode },
        cmdId,
        reason,
        assessment: a,
        device: dev.device,
        serial: dev.serial,
        sample,
        at,
      }),
    );
  }
}

const placeOf = (m: TelemetryLanded, socket: number): SocketPlace => ({ rigId: m.rigId, rigCode: m.rigCode, socket });
