/**
 * The socket judge of live protection: samples in, verdicts out, no I/O. It keeps the per-rig and
 * per-socket state (the look-back window, streaks, debounce counters, the latch) and decides, for
 * each socket of each telemetry message, whether to trip, warn, or raise or clear a condition
 * (bias out of tolerance, leakage jump, chamber out of band). The monitor (protection.monitor.ts)
 * turns the verdicts into trip commands (trip-delivery.ts) and alarms (alarm-text.ts).
 *
 * Hot path: this runs for thousands of sockets per second (DEVELOPERS.md, traps). Nothing here
 * allocates for a calm socket: verdicts are string constants, and an object (the assessment, a
 * bias or leakage finding) is built only when there is something to report. Per-sample fields
 * hold NaN, never null.
 */
import { DEFAULT_BIAS_TOLERANCE_PCT, chamberSetpointC } from '../../../shared/domain/standards';
import {
  SocketTrend,
  assessTrend,
  judgeTrend,
  type ProtectionDevice,
  type ProtectionOptions,
  type SocketAssessment,
  type SocketSample,
} from '../../../shared/safety/protection';
// From the modules themselves, not the index files: their re-exports compile to one shared keyed
// getter, which V8 does not inline (it was ~4 % of the ingest's CPU in the per-socket loops).
import { STRESS_FAMILY } from '../../../shared/domain/stress';
import { FLAG_BIAS_ON, FLAG_TRIPPED, MAX_SOCKETS } from '../../../shared/mqtt/payloads';
import type { RunState } from '../../db/entities';
import type { TelemetryLanded } from '../telemetry/contracts';
import type { RunContext } from './run-context';

/** What the judge needs of the monitor's options (protection.monitor.ts documents each). */
export interface JudgeOptions {
  protection: ProtectionOptions;
  historyMaxSamples: number;
  defaultDevice: ProtectionDevice | null;
  ambientBandMinC: number;
  debounceSamples: number;
  leakageJumpFactor: number;
  leakageFloorA: number;
  warnAfterSamples: number;
  warnClearSamples: number;
}

export interface SocketState {
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

export interface RigState {
  rigCode: string;
  lastClockS: number | null;
  lastSeq: number | null;
  sockets: Map<number, SocketState>;
  ambientOut: number;
  ambientIn: number;
}

/** What protection reads of a socket's device (a run's SocketDevice, or the plan's or default device). */
export interface DeviceInfo {
  readonly device: ProtectionDevice;
  readonly serial: string | null;
  readonly partNumber: string | null;
  readonly trips: number;
}

/**
 * The runaway verdict of one sample: 'not-judged' (no device, bias off, or a trip already issued),
 * 'calm', 'calm-long' (calm for warnClearSamples: a live warning may clear), or the assessment
 * ('trip', or 'warn' — `warningDue` tells whether the streak is long enough to raise).
 */
export type RunawayVerdict = 'not-judged' | 'calm' | 'calm-long' | SocketAssessment;

/** A bias quantity outside the plan's tolerance for debounceSamples samples. */
export interface BiasOff {
  what: string;
  unit: string;
  set: number;
  measured: number;
  tolerancePct: number;
}

/** A leakage jump under reverse bias. */
export interface LeakageJump {
  fromA: number;
  toA: number;
  ratio: number;
  factor: number;
  caseC: number;
  caseDeltaC: number;
  stressClockS: number;
}

/** The chamber outside its band for debounceSamples samples. */
export interface AmbientOut {
  setC: number;
  bandC: number;
  deviationC: number;
}

const isReverseBias = (run: RunContext) => STRESS_FAMILY[run.planKind] === 'reverse-bias';

export class SocketJudge {
  readonly opts: JudgeOptions;
  private readonly windowS: number;
  /** The plan's device for a socket missing from a run's socket map, one object per run context. */
  private readonly planDevices = new WeakMap<RunContext, DeviceInfo>();
  private defaultDeviceInfo: DeviceInfo | null = null;
  /** peerBaseline's scratch: one slot per socket a message can carry. */
  private readonly peerScratch = new Float64Array(MAX_SOCKETS);
  /**
   * The robust spread (1.4826 × MAD, °C) of the peers peerBaseline last saw; NaN without peers.
   * Read it right after peerBaseline (the monitor keeps it with the baseline for the message).
   */
  peerSpreadC = NaN;

  constructor(opts: JudgeOptions) {
    this.opts = opts;
    this.windowS = opts.protection.windowS;
  }

  newRig(rigCode: string): RigState {
    return { rigCode, lastClockS: null, lastSeq: null, sockets: new Map(), ambientOut: 0, ambientIn: 0 };
  }

  socketState(r: RigState, i: number): SocketState {
    let s = r.sockets.get(i);
    if (!s) {
      s = {
        trend: new SocketTrend(this.windowS, this.opts.historyMaxSamples),
        calm: 0,
        warnStreak: 0,
        tripCmdId: null,
        tripDelivery: null,
        tripReason: '',
        sawTripped: false,
        biasOut: 0,
        biasIn: 0,
        lastI: NaN,
        lastCaseC: NaN,
        lastBiasOn: false,
        leakBaseline: null,
      };
      r.sockets.set(i, s);
    }
    return s;
  }

  /**
   * Whether a message is judged at all: false for a late re-send of an older sample (newer ones
   * were already judged). Newer seq with an earlier clock means the rig rebooted: the histories
   * start afresh (old samples are on another time base).
   */
  admit(rig: RigState, m: TelemetryLanded): boolean {
    if (rig.lastSeq !== null && m.seq <= rig.lastSeq) return false;
    if (rig.lastClockS !== null && m.stressClockS < rig.lastClockS) this.resetTrends(rig);
    rig.lastClockS = m.stressClockS;
    rig.lastSeq = m.seq;
    return true;
  }

  /** A gap in telemetry (the rig went offline) breaks every trend. */
  rigWentOffline(rig: RigState): void {
    this.resetTrends(rig);
    rig.lastClockS = null;
  }

  private resetTrends(rig: RigState): void {
    for (const st of rig.sockets.values()) st.trend.reset();
  }

  /** The device in a socket (no allocation: this runs for every socket of every message). */
  deviceFor(run: RunContext | null, i: number): DeviceInfo | null {
    const s = run?.sockets.get(i);
    if (s) return s;
    if (run) {
      let d = this.planDevices.get(run);
      if (!d) this.planDevices.set(run, (d = { device: run.planDevice, serial: null, partNumber: run.planPartNumber, trips: 0 }));
      return d;
    }
    if (this.opts.defaultDevice) {
      if (this.defaultDeviceInfo?.device !== this.opts.defaultDevice)
        this.defaultDeviceInfo = { device: this.opts.defaultDevice, serial: null, partNumber: null, trips: 0 };
      return this.defaultDeviceInfo;
    }
    return null;
  }

  /**
   * The junction temperature the energised sockets of this message run at: their median (robust to
   * the one socket running away). Undefined with fewer than 3 energised sockets (then the detector
   * compares with the chamber).
   */
  peerBaseline(m: TelemetryLanded, run: RunContext | null): number | undefined {
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
    this.peerSpreadC = NaN;
    if (n < 3) return undefined;
    const sorted = tjs.subarray(0, n).sort();
    const mid = n >> 1;
    const median = n % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
    // Median absolute deviation, in the same scratch (the sorted values are no longer needed).
    for (let k = 0; k < n; k++) sorted[k] = Math.abs(sorted[k] - median);
    sorted.sort();
    this.peerSpreadC = 1.4826 * (n % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2);
    return median;
  }

  /**
   * Every socket's window of a message read at once (SocketTrend.touch) before any is judged, so the
   * judging finds them in the cache instead of waiting on memory socket by socket. Returns the sum
   * of what was read (the caller keeps it, so the reads stay).
   */
  touch(rig: RigState, m: TelemetryLanded): number {
    let warm = 0;
    for (let k = 0; k < m.socket.length; k++) {
      const st = rig.sockets.get(m.socket[k]);
      if (st) warm += st.trend.touch();
    }
    return warm;
  }

  /** The k-th socket of a message as the detector reads it. */
  sampleAt(m: TelemetryLanded, k: number): SocketSample {
    const flags = m.flags[k];
    return {
      tS: m.stressClockS,
      caseC: m.caseC[k],
      vV: Math.abs(m.vV[k]),
      iA: Math.abs(m.iA[k]),
      chamberC: m.chamberC,
      biasOn: (flags & FLAG_BIAS_ON) !== 0 && (flags & FLAG_TRIPPED) === 0,
    };
  }

  /** The rig's latch holds the socket off (our trip or its own interlock). */
  latchHeld(st: SocketState): void {
    st.sawTripped = true;
    st.trend.reset();
    st.calm = 0;
    st.lastBiasOn = false;
  }

  /** The first sample after the latch was held: true when it was reset (the trip's condition is over). */
  latchReset(st: SocketState): boolean {
    if (!st.sawTripped) return false;
    st.sawTripped = false;
    st.tripCmdId = null;
    st.tripDelivery = null;
    return true;
  }

  /** A trip command still energised and never confirmed: send it again (same cmdId). */
  tripNeedsResend(st: SocketState, sample: SocketSample): boolean {
    return st.tripCmdId !== null && st.tripDelivery === 'failed' && sample.biasOn;
  }

  /** The sample into the socket's window, then the runaway verdict. */
  runaway(
    st: SocketState,
    dev: DeviceInfo | null,
    sample: SocketSample,
    baselineTjC: number | undefined,
    peerSpreadC = NaN,
  ): RunawayVerdict {
    st.trend.push(sample, dev?.device.thetaJcCPerW ?? 0);
    if (!dev || !sample.biasOn || st.tripCmdId) return 'not-judged';
    const p = this.opts.protection;
    // The decision first, allocating nothing; the assessment itself (same inputs, same answer)
    // only when there is something to report.
    if (judgeTrend(st.trend, dev.device, p, baselineTjC, peerSpreadC) === 'none') {
      st.warnStreak = 0;
      st.calm++;
      return st.calm >= this.opts.warnClearSamples ? 'calm-long' : 'calm';
    }
    const a = assessTrend(st.trend, dev.device, p, baselineTjC, peerSpreadC);
    if (a.action === 'warn') {
      st.calm = 0;
      st.warnStreak++;
    }
    return a;
  }

  /** The assessment behind a 'calm-long' verdict (its reason clears the warning). */
  calmAssessment(st: SocketState, dev: DeviceInfo, baselineTjC: number | undefined, peerSpreadC = NaN): SocketAssessment {
    return assessTrend(st.trend, dev.device, this.opts.protection, baselineTjC, peerSpreadC);
  }

  /** A 'warn' assessment that has held for warnAfterSamples. */
  warningDue(st: SocketState, a: SocketAssessment): boolean {
    return a.action === 'warn' && st.warnStreak >= this.opts.warnAfterSamples;
  }

  /** A trip was decided: the socket's window starts afresh and the command is on its way. */
  tripIssued(st: SocketState, cmdId: string, reason: string): void {
    st.tripCmdId = cmdId;
    st.trend.reset();
    st.tripDelivery = 'sending';
    st.tripReason = reason;
  }

  /**
   * Bias against the plan while stressing: the first quantity out of tolerance once it has been
   * out for debounceSamples, 'clear-due' once back in for as long, else undefined. (The finding is
   * built only when a quantity is out: this runs for every socket of every message.)
   */
  bias(run: RunContext, st: SocketState, sample: SocketSample): BiasOff | 'clear-due' | undefined {
    const judged = run.state === 'stressing' && sample.biasOn;
    if (!judged) {
      st.biasOut = st.biasIn = 0;
      return undefined;
    }
    const tol = run.bias.tolerancePct ?? DEFAULT_BIAS_TOLERANCE_PCT;
    const b = run.bias;
    const outside = (set: number, measured: number) => Math.abs(measured - set) > (tol / 100) * set;
    let off: BiasOff | null = null;
    if (isReverseBias(run)) {
      if (b.vcbV && outside(b.vcbV, sample.vV))
        off = { what: 'reverse voltage', unit: 'V', set: b.vcbV, measured: sample.vV, tolerancePct: tol };
    } else if (b.vceV && outside(b.vceV, sample.vV)) off = { what: 'VCE', unit: 'V', set: b.vceV, measured: sample.vV, tolerancePct: tol };
    else if (b.icA && outside(b.icA, sample.iA))
      off = { what: 'collector current', unit: 'A', set: b.icA, measured: sample.iA, tolerancePct: tol };
    if (off) {
      st.biasOut++;
      st.biasIn = 0;
      return st.biasOut >= this.opts.debounceSamples ? off : undefined;
    }
    st.biasIn++;
    st.biasOut = 0;
    return st.biasIn >= this.opts.debounceSamples ? 'clear-due' : undefined;
  }

  /**
   * Leakage under reverse bias: a jump by leakageJumpFactor between two samples beyond what the
   * case temperature explains; 'clear' when a socket whose jump is live (`jumpActive`) is back
   * below the factor. Leakage roughly doubles per 10 °C (common practice).
   */
  leakage(run: RunContext, st: SocketState, sample: SocketSample, jumpActive: boolean): LeakageJump | 'clear' | undefined {
    if (!isReverseBias(run) || !sample.biasOn) return undefined;
    const factor = this.opts.leakageJumpFactor;
    if (st.leakBaseline !== null && jumpActive) {
      if (sample.iA < factor * st.leakBaseline) {
        st.leakBaseline = null;
        return 'clear';
      }
      return undefined;
    }
    if (!st.lastBiasOn || Number.isNaN(st.lastI) || Number.isNaN(st.lastCaseC) || st.lastI < this.opts.leakageFloorA) return undefined;
    const thermal = Math.max(1, Math.pow(2, (sample.caseC - st.lastCaseC) / 10));
    const ratio = sample.iA / st.lastI;
    if (ratio < factor * thermal) return undefined;
    st.leakBaseline = st.lastI;
    return {
      fromA: st.lastI,
      toA: sample.iA,
      ratio,
      factor,
      caseC: sample.caseC,
      caseDeltaC: sample.caseC - st.lastCaseC,
      stressClockS: sample.tS,
    };
  }

  /** What the next sample's checks compare with. */
  remember(st: SocketState, sample: SocketSample): undefined {
    // Numbers, never null: a field that only ever holds numbers is updated in place, where one that
    // may hold null takes a new heap number on every sample of every socket.
    st.lastI = sample.biasOn ? sample.iA : NaN;
    st.lastCaseC = sample.caseC;
    st.lastBiasOn = sample.biasOn;
    return undefined;
  }

  /**
   * The chamber against the run's band (centre ± half its width, at least ± ambientBandMinC) while
   * stressing: out of band for debounceSamples, 'clear-due' once back in for as long, 'no-stress'
   * when no run is stressing (a live alarm no longer applies), else undefined.
   */
  ambient(rig: RigState, run: RunContext | null, chamberC: number): AmbientOut | 'clear-due' | 'no-stress' | undefined {
    if (!run || run.state !== 'stressing') {
      rig.ambientOut = rig.ambientIn = 0;
      return 'no-stress';
    }
    // The plan's band in kelvin (a minimum with +x/−0 for HTRB), as its centre ± half-width.
    const set = chamberSetpointC(run.chamberC, run.chamberBand);
    const band = Math.max((run.chamberBand.belowK + run.chamberBand.aboveK) / 2, this.opts.ambientBandMinC);
    const dev = chamberC - set;
    if (Math.abs(dev) > band) {
      rig.ambientOut++;
      rig.ambientIn = 0;
      return rig.ambientOut >= this.opts.debounceSamples ? { setC: set, bandC: band, deviationC: dev } : undefined;
    }
    rig.ambientIn++;
    rig.ambientOut = 0;
    return rig.ambientIn >= this.opts.debounceSamples ? 'clear-due' : undefined;
  }

  /** A run changed state: the debounce counters start afresh; a finished run forgets its leakage baselines. */
  runStateChanged(rig: RigState | undefined, to: RunState): void {
    if (!rig) return;
    rig.ambientIn = rig.ambientOut = 0;
    for (const st of rig.sockets.values()) {
      st.biasIn = st.biasOut = 0;
      if (to === 'finished' || to === 'aborted') st.leakBaseline = null;
    }
  }
}
