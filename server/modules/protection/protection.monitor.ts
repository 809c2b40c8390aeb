/**
 * Live protection: consumes TELEMETRY_LANDED (each stored telemetry message) and RIG_STATUS_CHANGED,
 * keeps a short bounded history per (rig, socket) in memory, and
 * - runs assessSocket (shared/safety/protection) on every energised socket: 'trip' → trip command
 *   over RigLink (stable cmdId), run_sockets marked tripped, critical alarm; 'warn' → warning alarm;
 * - raises / clears the condition alarms: rig offline, chamber out of band, bias out of tolerance,
 *   leakage jump.
 * Messages of one rig are handled strictly in order (one promise chain per rig); rigs run independently.
 *
 * A software trip complements, and never replaces, the rig's hardware interlocks.
 *
 * Device data per socket: the loaded device's type (run_sockets → devices → lots → device_types of
 * the rig's active run); a socket missing from the socket map uses the plan's part; with no active
 * run an energised socket is judged with conservative defaults (`defaultDevice`, Tj max 150 °C,
 * θjc 2 °C/W) — set `defaultDevice: null` to skip such sockets instead.
 */
import { DEFAULT_PROTECTION_OPTIONS, SocketTrend, assessTrend, judgeTrend, type ProtectionDevice, type ProtectionOptions, type SocketAssessment, type SocketSample } from '../../../shared/safety/protection';
// From the modules themselves, not shared/mqtt's index: its re-exports compile to one shared keyed
// getter, which V8 does not inline (it was ~4 % of the ingest's CPU in the per-socket loops).
import { FLAG_BIAS_ON, FLAG_TRIPPED, MAX_SOCKETS } from '../../../shared/mqtt/payloads';
import type { AlarmKindName } from '../../../shared/schemas/alarms';
import type { AppContext } from '../../context';
import { RunSocketEntity } from '../../db/entities';
import { dedupeKeyFor, type RaiseAlarmInput } from '../alarms/alarms.service';
import { RIG_STATUS_CHANGED, RUN_EVENT, TELEMETRY_LANDED, type RigStatusChanged, type RunEvent, type TelemetryLanded } from '../../events';
import type { RunState } from '../../db/entities';
import { hasActiveRun, loadRunContext, type RunContext } from './run-context';
import { TurnGate } from './turns';

export interface ProtectionMonitorOptions {
  /** Passed to assessSocket. */
  protection: Partial<ProtectionOptions>;
  /** Samples kept per socket at most (besides the look-back window). */
  historyMaxSamples: number;
  /** Device data for an energised socket on a rig without an active run; null = skip such sockets. */
  defaultDevice: ProtectionDevice | null;
  /** Chamber band while stressing: ± this percent of the plan's set point … */
  ambientBandPct: number;
  /** … but never narrower than ± this many °C. */
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
  ambientBandPct: 3,
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

export const TRIP_ACTION =
  "Leave the socket de-energised; check heat sinking and bias before a reset; the rig's hardware interlocks remain the primary protection.";
export const WARN_ACTION =
  "Watch this socket and check its heat sinking (clamp, pad, airflow) and bias. Emberlot trips it if the junction keeps heading for its rating; the rig's hardware interlocks remain the primary protection.";
export const OFFLINE_ACTION =
  "Check the rig's controller and network connection. Until it reconnects Emberlot cannot see or trip its sockets; its hardware interlocks still protect the devices. Do not open a hot or energised oven to look.";
export const AMBIENT_ACTION =
  'Check the oven door, its controller and its set point. Stress time outside the band may not count toward the run.';
export const BIAS_ACTION =
  'Check the bias supply, the socket contact and the wiring. The device is not stressed as planned while this lasts.';
export const LEAKAGE_ACTION =
  'The device may be degrading or breaking down. Watch its current; if it keeps climbing, remove bias from the socket and note the device for failure analysis.';

/** Telemetry messages judged per turn of the event loop when many wait (turns.ts). */
const MESSAGES_PER_TURN = 6;

interface SocketState {
  /** The look-back window, kept incrementally (reset = start afresh). */
  trend: SocketTrend;
  calm: number;
  warnStreak: number;
  /** A trip command was issued for this socket and its latch has not been reset since. */
  tripCmdId: string | null;
  /** Delivery of that command: resent (same cmdId) on a later sample while it failed and bias is still on. */
  tripDelivery: 'sending' | 'confirmed' | 'failed' | null;
  tripReason: string;
  sawTripped: boolean;
  biasOut: number;
  biasIn: number;
  /** The previous sample's current (NaN: none, or bias was off) and case temperature (NaN: none). */
  lastI: number;
  lastCaseC: number;
  lastBiasOn: boolean;
  leakBaseline: number | null;
}

/** What protection reads of a socket's device (a run's SocketDevice, or the plan's or default device). */
interface DeviceInfo {
  readonly device: ProtectionDevice;
  readonly serial: string | null;
  readonly partNumber: string | null;
  readonly trips: number;
}

/** What the next sample's checks compare with. */
function remember(st: SocketState, sample: SocketSample): undefined {
  // Numbers, never null: a field that only ever holds numbers is updated in place, where one that
  // may hold null takes a new heap number on every sample of every socket.
  st.lastI = sample.biasOn ? sample.iA : NaN;
  st.lastCaseC = sample.caseC;
  st.lastBiasOn = sample.biasOn;
  return undefined;
}

interface RigState {
  rigCode: string;
  lastClockS: number | null;
  lastSeq: number | null;
  sockets: Map<number, SocketState>;
  ambientOut: number;
  ambientIn: number;
}

const f1 = (x: number | null | undefined) => (x === null || x === undefined || !Number.isFinite(x) ? 'n/a' : (Math.round(x * 10) / 10).toFixed(1));
const round = (x: number | null, digits = 3) => (x === null || !Number.isFinite(x) ? null : Number(x.toFixed(digits)));
const clip = (s: string, n: number) => (s.length > n ? s.slice(0, n - 1) + '…' : s);
const REVERSE_KINDS = new Set(['htrb', 'thb']);

/** Stable trip command id: `trip:<rig>:<socket>:<runId>` (":n" from the second trip of a socket in a run). */
export function tripCmdId(rigCode: string, socket: number, runId: string | null, previousTrips = 0): string {
  const suffix = previousTrips > 0 ? `:${previousTrips + 1}` : '';
  const id = `trip:${rigCode}:${socket}:${runId ?? 'norun'}${suffix}`;
  if (id.length <= 64) return id;
  // Long rig codes: the run id without dashes still identifies it (cmdId is at most 64 characters).
  return `trip:${rigCode}:${socket}:${(runId ?? 'norun').replace(/-/g, '').slice(0, 64 - 8 - rigCode.length - String(socket).length - suffix.length)}${suffix}`;
}

/** Active condition keys (`kind:rig:socket`) → last refresh, with a count per rig for a cheap "none here". */
class ActiveConditions {
  private readonly byKey = new Map<string, number>();
  private readonly perRig = new Map<string, number>();

  private static rigOf(key: string): string {
    return key.split(':')[1] ?? '';
  }

  get(key: string): number | undefined {
    return this.byKey.get(key);
  }

  has(key: string): boolean {
    return this.byKey.has(key);
  }

  set(key: string, at: number): void {
    if (!this.byKey.has(key)) {
      const rig = ActiveConditions.rigOf(key);
      this.perRig.set(rig, (this.perRig.get(rig) ?? 0) + 1);
    }
    this.byKey.set(key, at);
  }

  delete(key: string): void {
    if (!this.byKey.delete(key)) return;
    const rig = ActiveConditions.rigOf(key);
    const n = (this.perRig.get(rig) ?? 1) - 1;
    if (n > 0) this.perRig.set(rig, n);
    else this.perRig.delete(rig);
  }

  keys(): IterableIterator<string> {
    return this.byKey.keys();
  }

  anyFor(rigId: string): boolean {
    return this.perRig.has(rigId);
  }
}

export class ProtectionMonitor {
  readonly opts: ProtectionMonitorOptions;
  private readonly rigs = new Map<string, RigState>();
  private readonly runs = new Map<string, { run: RunContext | null; at: number }>();
  private readonly chains = new Map<string, Promise<void>>();
  private readonly pending = new Set<Promise<unknown>>();
  /** Dedupe keys of conditions this monitor believes active → last refresh (ms). */
  private readonly active = new ActiveConditions();
  private readonly listeners: Array<() => void> = [];
  private started = false;
  readonly stats = { messages: 0, staleSkipped: 0, assessments: 0, trips: 0, tripSendFailures: 0, warnings: 0, errors: 0 };
  /** Every trip decision, for tests and the log. */
  readonly tripLog: Array<{ rigCode: string; socket: number; runId: string | null; cmdId: string; assessment: SocketAssessment; sample: SocketSample; at: Date }> = [];

  /** assessTrend's options (baselineTjC is added per message). */
  private readonly protectionOpts: ProtectionOptions;
  private readonly windowS: number;

  constructor(private readonly ctx: AppContext, opts: Partial<ProtectionMonitorOptions> = {}) {
    this.opts = { ...DEFAULT_MONITOR_OPTIONS, ...opts, protection: { ...DEFAULT_MONITOR_OPTIONS.protection, ...(opts.protection ?? {}) } };
    this.protectionOpts = { ...DEFAULT_PROTECTION_OPTIONS, ...this.opts.protection };
    this.windowS = this.protectionOpts.windowS;
  }

  private get alarms() {
    return this.ctx.services.alarms;
  }

  async start(): Promise<void> {
    if (this.started) return;
    this.started = true;
    // Conditions still active from before a restart, so they can clear when seen healthy again.
    const kinds: AlarmKindName[] = ['runaway-warning', 'runaway-trip', 'rig-offline', 'ambient-out-of-band', 'bias-out-of-tolerance', 'leakage-jump'];
    for (const a of await this.alarms.activeKeys(kinds)) this.active.set(a.key, 0);
    const events = this.ctx.events;
    const onLanded = (m: TelemetryLanded) => this.enqueue(m.rigId, () => this.onTelemetry(m));
    const onStatus = (s: RigStatusChanged) => this.enqueue(s.rigId, () => this.onStatus(s));
    events.on(TELEMETRY_LANDED, onLanded);
    events.on(RIG_STATUS_CHANGED, onStatus);
    this.listeners.push(() => events.off(TELEMETRY_LANDED, onLanded), () => events.off(RIG_STATUS_CHANGED, onStatus));
    const invalidate = (e: unknown) => {
      const rigId = (e as { rigId?: unknown } | null)?.rigId;
      if (typeof rigId === 'string') this.runs.delete(rigId);
      else this.runs.clear();
    };
    const onRunEvent = (e: RunEvent) => {
      invalidate(e);
      if (e?.type === 'state-changed' && e.rigId) {
        const rigId = e.rigId;
        this.enqueue(rigId, () => this.onRunStateChanged(rigId, e.to));
      }
    };
    events.on(RUN_EVENT, onRunEvent);
    this.listeners.push(() => events.off(RUN_EVENT, onRunEvent));
  }

  async stop(): Promise<void> {
    for (const off of this.listeners) off();
    this.listeners.length = 0;
    await this.idle();
    this.started = false;
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
    const next = prev
      .then(job)
      .catch((err) => {
        this.stats.errors++;
        console.error(`[protection] rig ${rigId}:`, err instanceof Error ? err.message : err);
      })
      .finally(() => {
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
    if (!r) {
      r = { rigCode, lastClockS: null, lastSeq: null, sockets: new Map(), ambientOut: 0, ambientIn: 0 };
      this.rigs.set(rigId, r);
    }
    r.rigCode = rigCode;
    return r;
  }

  private socketState(r: RigState, i: number): SocketState {
    let s = r.sockets.get(i);
    if (!s) {
      s = { trend: new SocketTrend(this.windowS, this.opts.historyMaxSamples), calm: 0, warnStreak: 0, tripCmdId: null, tripDelivery: null, tripReason: '', sawTripped: false, biasOut: 0, biasIn: 0, lastI: NaN, lastCaseC: NaN, lastBiasOn: false, leakBaseline: null };
      r.sockets.set(i, s);
    }
    return s;
  }

  // -------------------------------------------------------------------------------------------
  // Alarm helpers (throttled refresh, clear only what is active)

  private async raise(input: RaiseAlarmInput, force = false): Promise<void> {
    const key = dedupeKeyFor(input.kind, input.rigId, input.socketIndex);
    const last = this.active.get(key);
    const now = Date.now();
    if (!force && last !== undefined && last > 0 && now - last < this.opts.refreshMs) return;
    this.active.set(key, now);
    await this.alarms.raise(input);
  }

  private async clear(kind: AlarmKindName, rigId: string, socket: number | null, details?: Record<string, unknown>): Promise<void> {
    const key = dedupeKeyFor(kind, rigId, socket);
    if (!this.active.has(key)) return;
    this.active.delete(key);
    await this.alarms.clear(kind, rigId, socket, details);
  }

  private isActive(kind: AlarmKindName, rigId: string, socket: number | null): boolean {
    // Asked for every socket of every message: most rigs have no active condition at all.
    return this.active.anyFor(rigId) && this.active.has(dedupeKeyFor(kind, rigId, socket));
  }

  // -------------------------------------------------------------------------------------------

  /** A run left stressing or ended: conditions judged against its plan no longer apply. */
  private async onRunStateChanged(rigId: string, to: RunState): Promise<void> {
    this.runs.delete(rigId);
    const kinds: AlarmKindName[] = [];
    if (to !== 'stressing') kinds.push('bias-out-of-tolerance', 'ambient-out-of-band');
    if (to === 'finished' || to === 'aborted') kinds.push('leakage-jump', 'runaway-warning', 'runaway-trip');
    const rig = this.rigs.get(rigId);
    if (rig) {
      rig.ambientIn = rig.ambientOut = 0;
      for (const st of rig.sockets.values()) {
        st.biasIn = st.biasOut = 0;
        if (to === 'finished' || to === 'aborted') st.leakBaseline = null;
      }
    }
    for (const key of [...this.active.keys()]) {
      const [kind, keyRig, socket] = key.split(':');
      if (keyRig !== rigId || !kinds.includes(kind as AlarmKindName)) continue;
      await this.clear(kind as AlarmKindName, rigId, socket === '-' ? null : Number(socket), { runState: to });
    }
  }

  private async onStatus(s: RigStatusChanged): Promise<void> {
    const rig = this.rigState(s.rigId, s.rigCode);
    if (s.online) {
      await this.clear('rig-offline', s.rigId, null, { onlineAt: s.at.toISOString() });
      return;
    }
    // The gap in telemetry breaks every trend: start the histories afresh.
    for (const st of rig.sockets.values()) st.trend.reset();
    rig.lastClockS = null;
    if (!(await hasActiveRun(this.ctx, s.rigId))) return;
    this.runs.delete(s.rigId);
    const run = await this.runFor(s.rigId);
    const when = s.at.toISOString().slice(0, 19).replace('T', ' ');
    await this.raise(
      {
        kind: 'rig-offline',
        severity: 'critical',
        rigId: s.rigId,
        runId: run?.runId ?? null,
        socketIndex: null,
        title: `Rig ${s.rigCode} is offline`,
        message:
          `${s.rigCode} went offline at ${when} UTC` +
          (run ? ` while run ${run.runCode} was ${run.state}` : ' while a run was booked on it') +
          '. Emberlot receives no telemetry from it and cannot trip its sockets until it reconnects.',
        action: OFFLINE_ACTION,
        details: { offlineAt: s.at.toISOString(), runState: run?.state ?? null },
      },
      true,
    );
  }

  /** Where onTelemetry leaves SocketTrend.touch's sum (so the reads stay). */
  private warmSink = 0;

  /** A few messages per turn of the event loop (turns.ts). */
  private readonly turns = new TurnGate(MESSAGES_PER_TURN);

  private async onTelemetry(m: TelemetryLanded): Promise<void> {
    // A committed batch lands hundreds of messages at once; judged back to back they would hold up
    // HTTP, MQTT and the ingest's next statements. A few per turn of the event loop instead.
    await this.turns.next();
    this.stats.messages++;
    const rig = this.rigState(m.rigId, m.rigCode);
    if (rig.lastSeq !== null && m.seq <= rig.lastSeq) {
      // A late re-send of an older sample (the rig's outbox): newer ones were already judged.
      this.stats.staleSkipped++;
      return;
    }
    if (rig.lastClockS !== null && m.stressClockS < rig.lastClockS) {
      // Newer seq, earlier clock: the rig rebooted; old samples are on another time base.
      for (const st of rig.sockets.values()) st.trend.reset();
    }
    rig.lastClockS = m.stressClockS;
    rig.lastSeq = m.seq;
    // Telemetry proves the rig is back.
    if (this.isActive('rig-offline', m.rigId, null)) await this.clear('rig-offline', m.rigId, null, { telemetryAt: m.ts.toISOString() });

    const run = await this.runFor(m.rigId);
    const baselineTjC = this.peerBaseline(m, run);
    // Every socket's window first, all at once (SocketTrend.touch): the judging below then finds
    // them in the cache instead of waiting on memory socket by socket.
    let warm = 0;
    for (let k = 0; k < m.socket.length; k++) {
      const st = rig.sockets.get(m.socket[k]);
      if (st) warm += st.trend.touch();
    }
    this.warmSink = warm;
    for (let k = 0; k < m.socket.length; k++) {
      // Most sockets are judged without waiting on anything: only an alarm to raise or clear, or a
      // bias/leakage check that writes, hands back a promise.
      const pending = this.onSocket(m, rig, run, k, baselineTjC);
      if (pending) await pending;
    }
    await this.checkAmbient(m, rig, run);
  }

  /** The plan's device for a socket missing from a run's socket map, one object per run context. */
  private readonly planDevices = new WeakMap<RunContext, DeviceInfo>();
  private defaultDeviceInfo: DeviceInfo | null = null;

  /** The device in a socket (no allocation: this runs for every socket of every message). */
  private deviceFor(run: RunContext | null, i: number): DeviceInfo | null {
    const s = run?.sockets.get(i);
    if (s) return s;
    if (run) {
      let d = this.planDevices.get(run);
      if (!d) this.planDevices.set(run, (d = { device: run.planDevice, serial: null, partNumber: run.planPartNumber, trips: 0 }));
      return d;
    }
    if (this.opts.defaultDevice) {
      if (this.defaultDeviceInfo?.device !== this.opts.defaultDevice) this.defaultDeviceInfo = { device: this.opts.defaultDevice, serial: null, partNumber: null, trips: 0 };
      return this.defaultDeviceInfo;
    }
    return null;
  }

  /**
   * The junction temperature the energised sockets of this message run at: their median (robust to
   * the one socket running away). Undefined with fewer than 3 energised sockets (then the detector
   * compares with the chamber).
   */
  private peerBaseline(m: TelemetryLanded, run: RunContext | null): number | undefined {
    // Into a reused typed array, sorted natively (numeric, no comparator): this runs per message.
    const tjs = this.peerScratch;
    let n = 0;
    const { socket, caseC, vV, iA, flags } = m;
    for (let k = 0; k < socket.length; k++) {
      if ((flags[k] & (FLAG_BIAS_ON | FLAG_TRIPPED)) !== FLAG_BIAS_ON) continue;
      const dev = this.deviceFor(run, socket[k]);
      if (!dev) continue;
      tjs[n++] = caseC[k] + dev.device.thetaJcCPerW * Math.abs(vV[k]) * Math.abs(iA[k]);
    }
    if (n < 3) return undefined;
    const sorted = tjs.subarray(0, n).sort();
    const mid = n >> 1;
    return n % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
  }
  /** peerBaseline's scratch: one slot per socket a message can carry. */
  private readonly peerScratch = new Float64Array(MAX_SOCKETS);

  /**
   * One socket of one message. It hands back a promise only when it has to wait — an alarm to raise
   * or clear, a bias or leakage check that writes — and otherwise finishes at once: a promise and a
   * microtask for each of thousands of sockets per second was a good part of the ingest's CPU. The
   * steps and their order are the same either way.
   */
  private onSocket(m: TelemetryLanded, rig: RigState, run: RunContext | null, k: number, baselineTjC?: number): Promise<void> | undefined {
    const i = m.socket[k];
    const flags = m.flags[k];
    const tripped = (flags & FLAG_TRIPPED) !== 0;
    const st = this.socketState(rig, i);
    const sample: SocketSample = {
      tS: m.stressClockS,
      caseC: m.caseC[k],
      vV: Math.abs(m.vV[k]),
      iA: Math.abs(m.iA[k]),
      chamberC: m.chamberC,
      biasOn: (flags & FLAG_BIAS_ON) !== 0 && !tripped,
    };

    if (tripped) {
      // The rig's latch holds the socket off (our trip or its own interlock).
      st.sawTripped = true;
      st.trend.reset();
      st.calm = 0;
      st.lastBiasOn = false;
      if (this.isActive('runaway-warning', m.rigId, i)) return this.clear('runaway-warning', m.rigId, i, { reason: 'socket tripped' });
      return undefined;
    }
    if (st.sawTripped) {
      // The latch was reset: the trip's condition is over (the alarm stays until acknowledged).
      st.sawTripped = false;
      st.tripCmdId = null;
      st.tripDelivery = null;
      return this.clear('runaway-trip', m.rigId, i, { reason: 'trip latch reset' }).then(() => this.judgeSocket(m, rig, run, i, st, sample, baselineTjC));
    }
    return this.judgeSocket(m, rig, run, i, st, sample, baselineTjC);
  }

  /** The runaway assessment of an untripped socket, then its bias and leakage checks. */
  private judgeSocket(
    m: TelemetryLanded,
    rig: RigState,
    run: RunContext | null,
    i: number,
    st: SocketState,
    sample: SocketSample,
    baselineTjC: number | undefined,
  ): Promise<void> | undefined {
    if (st.tripCmdId && st.tripDelivery === 'failed' && sample.biasOn) {
      // Still energised and the command never got through: try again with the same cmdId.
      this.track(this.resendTrip(m, run, i, st));
    }

    const dev = this.deviceFor(run, i);
    st.trend.push(sample, dev?.device.thetaJcCPerW ?? 0);
    let alarm: Promise<void> | undefined;
    if (dev && sample.biasOn && !st.tripCmdId) {
      this.stats.assessments++;
      // The decision first, allocating nothing; the assessment itself (same inputs, same answer)
      // only when there is something to report.
      if (judgeTrend(st.trend, dev.device, this.protectionOpts, baselineTjC) === 'none') {
        st.warnStreak = 0;
        st.calm++;
        if (st.calm >= this.opts.warnClearSamples && this.isActive('runaway-warning', m.rigId, i)) {
          const a = assessTrend(st.trend, dev.device, this.protectionOpts, baselineTjC);
          alarm = this.clear('runaway-warning', m.rigId, i, { reason: a.reason });
        }
        return alarm ? alarm.then(() => this.checkRunSocket(m, run, i, st, sample)) : this.checkRunSocket(m, run, i, st, sample);
      }
      const a = assessTrend(st.trend, dev.device, this.protectionOpts, baselineTjC);
      if (a.action === 'trip') {
        this.startTrip(m, rig, run, i, st, sample, a, dev);
      } else if (a.action === 'warn') {
        st.calm = 0;
        st.warnStreak++;
      }
      if (a.action === 'warn' && st.warnStreak >= this.opts.warnAfterSamples) {
        this.stats.warnings++;
        alarm = this.raise({
          kind: 'runaway-warning',
          severity: 'warning',
          rigId: m.rigId,
          runId: run?.runId ?? null,
          socketIndex: i,
          title: `Socket ${i} on ${m.rigCode}: runaway risk`,
          message: `${a.reason}. ${numbersText(a, dev.device)}`,
          action: WARN_ACTION,
          details: assessmentDetails(a, dev.device, sample, dev.serial),
        });
      }
    }
    return alarm ? alarm.then(() => this.checkRunSocket(m, run, i, st, sample)) : this.checkRunSocket(m, run, i, st, sample);
  }

  /** Bias, then leakage (each may write), then remember this sample for the next one. */
  private checkRunSocket(m: TelemetryLanded, run: RunContext | null, i: number, st: SocketState, sample: SocketSample): Promise<void> | undefined {
    if (!run || st.tripCmdId) return remember(st, sample);
    const bias = this.checkBias(m, run, i, st, sample);
    return bias ? bias.then(() => this.checkLeakageThenRemember(m, run, i, st, sample)) : this.checkLeakageThenRemember(m, run, i, st, sample);
  }

  private checkLeakageThenRemember(m: TelemetryLanded, run: RunContext, i: number, st: SocketState, sample: SocketSample): Promise<void> | undefined {
    const leak = this.checkLeakage(m, run, i, st, sample);
    return leak ? leak.then(() => remember(st, sample)) : remember(st, sample);
  }

  // -------------------------------------------------------------------------------------------
  // Trip

  private startTrip(
    m: TelemetryLanded,
    rig: RigState,
    run: RunContext | null,
    socket: number,
    st: SocketState,
    sample: SocketSample,
    a: SocketAssessment,
    dev: { device: ProtectionDevice; serial: string | null; trips: number },
  ): void {
    const runSocket = run?.sockets.get(socket);
    // The socket's own run when several runs share the oven; else the rig's run.
    const socketRunId = runSocket?.runId ?? run?.runId ?? null;
    const socketRunCode = runSocket?.runCode ?? run?.runCode ?? null;
    const cmdId = tripCmdId(m.rigCode, socket, socketRunId, dev.trips);
    st.tripCmdId = cmdId;
    st.trend.reset();
    if (runSocket) runSocket.trips += 1;
    this.stats.trips++;
    const at = this.ctx.now();
    this.tripLog.push({ rigCode: m.rigCode, socket, runId: socketRunId, cmdId, assessment: a, sample, at });
    if (this.tripLog.length > 1000) this.tripLog.shift();
    const reason = clip(`Emberlot protection: ${a.reason}`, 200);

    // 1. The command first: nothing else may delay it.
    st.tripDelivery = 'sending';
    st.tripReason = reason;
    const delivery = this.sendTrip(m.rigCode, socket, reason, cmdId).then((r) => {
      if (st.tripCmdId === cmdId) st.tripDelivery = r.ok ? 'confirmed' : 'failed';
      return r;
    });
    // 2. Record and alarm in parallel.
    const details = { ...assessmentDetails(a, dev.device, sample, dev.serial), cmdId, command: 'sent' };
    const title = `Socket ${socket} on ${m.rigCode} tripped: runaway`;
    const where = `socket ${socket} on ${m.rigCode}${dev.serial ? ` (device ${dev.serial}` + (socketRunCode ? `, run ${socketRunCode})` : ')') : socketRunCode ? ` (run ${socketRunCode})` : ''}`;
    const baseMessage = `Emberlot removed bias from ${where}: ${a.reason}. ${numbersText(a, dev.device)}`;
    const record = async () => {
      if (socketRunId) {
        await this.ctx.ds
          .getRepository(RunSocketEntity)
          .update({ runId: socketRunId, socketIndex: socket }, { tripped: true, trippedAt: at, tripReason: clip(a.reason, 1000) });
      }
      await this.clear('runaway-warning', m.rigId, socket, { reason: 'superseded by a trip' });
      await this.raise(
        { kind: 'runaway-trip', severity: 'critical', rigId: m.rigId, runId: socketRunId, socketIndex: socket, title, message: baseMessage, action: TRIP_ACTION, details },
        true,
      );
      const outcome = await delivery;
      const message = outcome.ok
        ? `${baseMessage} The rig confirmed the trip.`
        : `${baseMessage} The rig did NOT confirm the trip command (${outcome.error}): remove bias from this socket at the rig now.`;
      await this.raise(
        {
          kind: 'runaway-trip',
          severity: 'critical',
          rigId: m.rigId,
          runId: socketRunId,
          socketIndex: socket,
          title,
          message,
          action: TRIP_ACTION,
          details: { ...details, command: outcome.ok ? 'confirmed' : 'not confirmed', commandError: outcome.ok ? null : outcome.error },
        },
        true,
      );
    };
    this.track(record());
    void rig;
  }

  private async resendTrip(m: TelemetryLanded, run: RunContext | null, socket: number, st: SocketState): Promise<void> {
    const cmdId = st.tripCmdId;
    if (!cmdId) return;
    st.tripDelivery = 'sending';
    const r = await this.sendTrip(m.rigCode, socket, st.tripReason, cmdId);
    if (st.tripCmdId !== cmdId) return;
    st.tripDelivery = r.ok ? 'confirmed' : 'failed';
    if (r.ok) {
      const key = dedupeKeyFor('runaway-trip', m.rigId, socket);
      this.active.set(key, Date.now());
      const current = await this.alarms.list({ status: 'all', rigId: m.rigId, kind: 'runaway-trip', limit: 100, offset: 0 });
      const a = current.items.find((x) => x.socketIndex === socket && x.active);
      if (a) {
        await this.alarms.raise({
          kind: 'runaway-trip',
          severity: 'critical',
          rigId: m.rigId,
          runId: run?.runId ?? a.runId,
          socketIndex: socket,
          title: a.title,
          message: a.message.replace(/ The rig did NOT confirm.*$/, ' The rig confirmed the trip on a later attempt.'),
          action: a.action,
          details: { ...a.details, command: 'confirmed', commandError: null },
        });
      }
    }
  }

  private async sendTrip(rigCode: string, socket: number, reason: string, cmdId: string): Promise<{ ok: true } | { ok: false; error: string }> {
    let error = 'no rig link is running in this server';
    for (let attempt = 1; attempt <= this.opts.tripAttempts; attempt++) {
      const link = this.ctx.services.rigLink;
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

  // -------------------------------------------------------------------------------------------
  // Conditions

  private async checkAmbient(m: TelemetryLanded, rig: RigState, run: RunContext | null): Promise<void> {
    if (!run || run.state !== 'stressing') {
      rig.ambientOut = rig.ambientIn = 0;
      if (this.isActive('ambient-out-of-band', m.rigId, null) && (!run || run.state !== 'stressing')) {
        await this.clear('ambient-out-of-band', m.rigId, null, { reason: run ? `run ${run.state}` : 'no active run' });
      }
      return;
    }
    const set = run.chamberC;
    const band = Math.max((this.opts.ambientBandPct / 100) * Math.abs(set), this.opts.ambientBandMinC);
    const dev = m.chamberC - set;
    if (Math.abs(dev) > band) {
      rig.ambientOut++;
      rig.ambientIn = 0;
      if (rig.ambientOut >= this.opts.debounceSamples) {
        await this.raise({
          kind: 'ambient-out-of-band',
          severity: 'warning',
          rigId: m.rigId,
          runId: run.runId,
          socketIndex: null,
          title: `Chamber of ${m.rigCode} out of band`,
          message: `The chamber of ${m.rigCode} reads ${f1(m.chamberC)} °C; run ${run.runCode} holds ${f1(set)} °C ± ${f1(band)} °C (${f1(set - band)}–${f1(set + band)} °C), ${f1(Math.abs(dev))} °C ${dev > 0 ? 'too hot' : 'too cold'}.`,
          action: AMBIENT_ACTION,
          details: { chamberC: m.chamberC, setC: set, bandC: round(band, 2), deviationC: round(dev, 2), rigSetpointC: m.setpointC },
        });
      }
    } else {
      rig.ambientIn++;
      rig.ambientOut = 0;
      if (rig.ambientIn >= this.opts.debounceSamples && this.isActive('ambient-out-of-band', m.rigId, null)) {
        await this.clear('ambient-out-of-band', m.rigId, null, { chamberC: m.chamberC });
      }
    }
  }

  /** Returns a promise only when it raises or clears an alarm (most samples: nothing to wait for). */
  private checkBias(m: TelemetryLanded, run: RunContext, i: number, st: SocketState, sample: SocketSample): Promise<void> | undefined {
    const judged = run.state === 'stressing' && sample.biasOn;
    const tol = run.bias.tolerancePct ?? 5;
    // The first quantity out of tolerance; the description is built only then (this runs for every
    // socket of every message).
    let off: { what: string; unit: string; set: number; measured: number } | null = null;
    if (judged) {
      const b = run.bias;
      const outside = (set: number, measured: number) => Math.abs(measured - set) > (tol / 100) * set;
      if (REVERSE_KINDS.has(run.planKind)) {
        if (b.vcbV && outside(b.vcbV, sample.vV)) off = { what: 'reverse voltage', unit: 'V', set: b.vcbV, measured: sample.vV };
      } else if (b.vceV && outside(b.vceV, sample.vV)) off = { what: 'VCE', unit: 'V', set: b.vceV, measured: sample.vV };
      else if (b.icA && outside(b.icA, sample.iA)) off = { what: 'collector current', unit: 'A', set: b.icA, measured: sample.iA };
    }
    if (judged && off) {
      st.biasOut++;
      st.biasIn = 0;
      if (st.biasOut >= this.opts.debounceSamples) {
        const pct = ((off.measured - off.set) / off.set) * 100;
        return this.raise({
          kind: 'bias-out-of-tolerance',
          severity: 'warning',
          rigId: m.rigId,
          runId: run.runId,
          socketIndex: i,
          title: `Socket ${i} on ${m.rigCode}: bias out of tolerance`,
          message: `Socket ${i} on ${m.rigCode} reads ${fmtUnit(off.measured, off.unit)} ${off.what} against the plan's ${fmtUnit(off.set, off.unit)} (± ${tol} %): ${Math.abs(pct).toFixed(1)} % ${pct < 0 ? 'low' : 'high'}.`,
          action: BIAS_ACTION,
          details: { quantity: off.what, measured: off.measured, set: off.set, unit: off.unit, tolerancePct: tol, deviationPct: round(pct, 2) },
        });
      }
    } else if (judged) {
      st.biasIn++;
      st.biasOut = 0;
      if (st.biasIn >= this.opts.debounceSamples && this.isActive('bias-out-of-tolerance', m.rigId, i)) {
        return this.clear('bias-out-of-tolerance', m.rigId, i, { vV: sample.vV, iA: sample.iA });
      }
    } else {
      st.biasOut = st.biasIn = 0;
    }
    return undefined;
  }

  /** Returns a promise only when it raises or clears an alarm. */
  private checkLeakage(m: TelemetryLanded, run: RunContext, i: number, st: SocketState, sample: SocketSample): Promise<void> | undefined {
    if (!REVERSE_KINDS.has(run.planKind) || !sample.biasOn) return undefined;
    const factor = this.opts.leakageJumpFactor;
    if (st.leakBaseline !== null && this.isActive('leakage-jump', m.rigId, i)) {
      const expected = st.leakBaseline;
      if (sample.iA < factor * expected) {
        st.leakBaseline = null;
        return this.clear('leakage-jump', m.rigId, i, { iA: sample.iA });
      }
      return undefined;
    }
    if (!st.lastBiasOn || Number.isNaN(st.lastI) || Number.isNaN(st.lastCaseC) || st.lastI < this.opts.leakageFloorA) return undefined;
    // Leakage roughly doubles per 10 °C (common practice): allow for the case temperature change.
    const thermal = Math.max(1, Math.pow(2, (sample.caseC - st.lastCaseC) / 10));
    const ratio = sample.iA / st.lastI;
    if (ratio >= factor * thermal) {
      st.leakBaseline = st.lastI;
      return this.raise(
        {
          kind: 'leakage-jump',
          severity: 'warning',
          rigId: m.rigId,
          runId: run.runId,
          socketIndex: i,
          title: `Socket ${i} on ${m.rigCode}: leakage jumped ×${ratio >= 100 ? Math.round(ratio) : ratio.toFixed(1)}`,
          message: `Under reverse bias the current of socket ${i} on ${m.rigCode} rose from ${fmtUnit(st.lastI, 'A')} to ${fmtUnit(sample.iA, 'A')} between two samples (×${ratio.toPrecision(3)}; the alarm threshold is ×${factor} beyond the temperature effect, the case moved ${f1(sample.caseC - st.lastCaseC)} °C).`,
          action: LEAKAGE_ACTION,
          details: { fromA: st.lastI, toA: sample.iA, ratio: round(ratio, 2), factor, caseC: sample.caseC, stressClockS: sample.tS },
        },
        true,
      );
    }
    return undefined;
  }
}

function fmtUnit(x: number, unit: string): string {
  const a = Math.abs(x);
  if (unit === 'A') {
    if (a === 0) return '0 A';
    if (a < 1e-6) return `${(x * 1e9).toPrecision(3)} nA`;
    if (a < 1e-3) return `${(x * 1e6).toPrecision(3)} µA`;
    if (a < 1) return `${(x * 1e3).toPrecision(3)} mA`;
    return `${x.toPrecision(3)} A`;
  }
  return `${Number(x.toPrecision(4))} ${unit}`;
}

function numbersText(a: SocketAssessment, d: ProtectionDevice): string {
  const parts = [`Junction estimate ${f1(a.tjC)} °C against a rating of ${f1(d.tjMaxC)} °C`];
  parts.push(a.loopGain === null ? 'loop gain not resolved yet' : `loop gain ${a.loopGain.toFixed(2)}`);
  parts.push(a.secondsToTjMax === null ? 'no projection to Tj max' : `Tj max projected in ${Math.round(a.secondsToTjMax)} s at this trend`);
  return parts.join('; ') + '.';
}

function assessmentDetails(a: SocketAssessment, d: ProtectionDevice, s: SocketSample, serial: string | null): Record<string, unknown> {
  return {
    tjC: round(a.tjC, 2),
    tjMaxC: d.tjMaxC,
    marginC: a.tjC === null ? null : round(d.tjMaxC - a.tjC, 2),
    loopGain: round(a.loopGain, 3),
    secondsToTjMax: round(a.secondsToTjMax, 1),
    slopeCPerS: round(a.slopeCPerS, 4),
    thetaCaCPerW: round(a.thetaCaCPerW, 3),
    thetaJcCPerW: d.thetaJcCPerW,
    caseC: s.caseC,
    chamberC: s.chamberC,
    vV: s.vV,
    iA: s.iA,
    powerW: round(s.vV * s.iA, 3),
    stressClockS: s.tS,
    deviceSerial: serial,
    reason: a.reason,
  };
}
