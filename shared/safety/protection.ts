/**
 * Live runaway protection for one socket, evaluated on every telemetry sample.
 * Pure: give assessSocket the socket's recent samples (only the last `windowS` seconds of continuous
 * bias are used) and it returns what to do now. Live protection keeps one SocketTrend per socket
 * instead (socket-trend.ts: the same estimators from running sums, O(1) per sample) and calls
 * assessTrend.
 *
 * A software trip complements, and never replaces, the rig's hardware interlocks.
 *
 * Estimators (all over the latest continuous bias-on stretch within `windowS`):
 * - Junction: Tj = T_case + θjc·V·I (JEDEC JESD51 definition), per sample.
 * - Trend: least-squares quadratic of Tj against stress-clock time, centred on the latest sample,
 *   giving the current slope Ṫ and curvature T̈ with their standard errors. A slope or curvature
 *   counts only when it exceeds `significanceZ` standard errors (and, for the slope, `minRiseCPerS`),
 *   so sensor noise on a steady socket does not read as a trend.
 * - Time to Tj max: near its current state the heat balance τ·Ṫ = Ta + θ·P(Tj) − Tj is linear,
 *   so the slope evolves as Ṫ(t) ∝ e^{λt} with λ = T̈/Ṫ = −(1 − G)/τ: λ < 0 is a settling approach,
 *   λ > 0 a runaway. Projected Tj(t+Δ) = Tj + (Ṫ/λ)(e^{λΔ} − 1), solved for Tj max; linear when the
 *   curvature is not significant; none when the projection levels off below Tj max or Tj is not rising.
 * - Loop gain G = θ·∂P/∂Tj: θ = θjc + θca, with θca fitted through the origin from
 *   (T_case − T_chamber) = θca·P (least squares; no power, no rise); ∂P/∂T_case from a least-squares
 *   line of P on T_case (simple-statistics), converted to the junction by ∂P/∂Tj = s/(1 + θjc·s)
 *   because Tj = T_case + θjc·P. Using the case rather than Tj as regressor keeps current noise out
 *   of both axes. Reported only when the case moved at least `minCaseSpanC` and the slope is
 *   significant; otherwise null (the window is too steady to show the feedback). θca is bounded by
 *   θja − θjc (DEFAULT_MAX_THETA_JA_C_PER_W): an oven spot a few kelvin hotter is not self-heating.
 *   Known bias: while the socket is still warming, part of the heat goes into thermal mass, the case
 *   sits below θca·P and the fitted θca (hence the loop gain) reads low. The loop-gain rule therefore
 *   catches quasi-static runaway (a chamber or socket drifting past its critical point); fast
 *   transients are caught by the time-to-limit projection and the temperature threshold.
 */
import { RATED_STRESS_HEADROOM_K } from '../domain/standards';
import { protectionThetaCa } from '../thermal/rules';
import {
  FIT_ACCEL,
  FIT_ACCEL_SE,
  FIT_C0,
  FIT_LEN,
  FIT_SLOPE,
  FIT_SLOPE_SE,
  REG_CASE_SPAN,
  REG_LEN,
  REG_N,
  REG_RSS,
  REG_SLOPE,
  REG_SUM_P2,
  REG_SUM_RISE_P,
  REG_SXX,
  SocketTrend,
  type TrendSample,
} from './socket-trend';

export { SocketTrend };

/** One telemetry sample of a socket: stress-clock time (s), case, |V| (V), |I| (A), chamber, bias on. */
export type SocketSample = TrendSample;

export interface ProtectionDevice {
  /** The junction at which protection trips outright: Tj max, or a run's raised limit (protectionLimitC). */
  tjMaxC: number;
  /** The data sheet's Tj max, when tjMaxC is a run's limit above it (an HTRB at rating); named in trip reasons. */
  ratedTjMaxC?: number;
  thetaJcCPerW: number;
  /**
   * Junction-to-ambient in free air (the data sheet's θja): the most a socket's heat path can be,
   * so the fitted θca is bounded by θja − θjc. Absent: DEFAULT_MAX_THETA_JA_C_PER_W.
   */
  thetaJaCPerW?: number;
  /**
   * The socket's identified case-to-ambient θ (°C/W, shared/thermal: a good fit of its own
   * telemetry), or null/absent. It may only raise the θca the loop gain uses and its bound, never
   * lower them (protectionThetaCa in shared/thermal/rules.ts).
   */
  identifiedThetaCaCPerW?: number | null;
}

/**
 * θja bound when the device gives none: 80 °C/W, above a TO-220 in free air (about 62 °C/W —
 * from memory) and a TO-247's (about 40 °C/W — from memory). Why a bound at all: θca is fitted
 * through the origin from (T_case − T_chamber) = θca·P, so a socket that sits 5 K above the chamber
 * because of where it is in the oven, with the milliwatts of reverse bias, reads as θca ≈ 1000 °C/W
 * and an absurd loop gain. A socket cannot hold its die hotter than free air would.
 */
export const DEFAULT_MAX_THETA_JA_C_PER_W = 80;

export interface ProtectionOptions {
  /**
   * The margin zone: Tj ≥ Tj max − marginC. Being in it is not a reason to trip by itself — HTRB
   * at its rating holds every junction there on purpose, and oven non-uniformity (σ 3–6 °C) puts a
   * quarter of the healthy sockets a few kelvin above their peers' median. Inside the zone a socket
   * is tripped only when it is still climbing AND shows thermal feedback: its fitted loop gain is at
   * least marginLoopGain, or (before the trend is established) it runs selfHeatAllowanceC above its
   * peers and is projected to reach Tj max within horizonS. See judgeTrend for the criterion.
   */
  marginC: number;
  /** See marginC: °C a rising socket must run above its baseline for the early (pre-trend) zone rule. */
  selfHeatAllowanceC: number;
  /**
   * Inside the margin zone, a rising socket whose loop gain θ·∂P/∂Tj has reached this is tripped:
   * the loop is approaching the stability limit G = 1 with no temperature margin left. At G = 0.5
   * a stable socket's rise above the chamber is already doubled (ΔT = θ·P₀/(1 − G)); Emberlot's
   * choice, not a standard's.
   */
  marginLoopGain: number;
  /**
   * The junction temperature this socket is expected to run at: the median of its energised peers
   * on the same rig (the monitor passes it). Absent: the chamber temperature of the latest sample.
   */
  baselineTjC?: number;
  /**
   * The robust spread (1.4826 × median absolute deviation, °C) of the energised peers' junctions
   * around that median; absent or NaN without peers. See peerOutlierZ.
   */
  peerSpreadC?: number;
  /**
   * Within the margin zone, a socket further above its peers' median than both peerOutlierMinC and
   * peerOutlierZ × peerSpreadC is not part of the oven's spread (σ 3–6 °C puts 4σ at 12–24 °C): a
   * failing heat sink holding its junction 30 K above the board trips even when steady. Emberlot's
   * choice (a 4σ outlier of a normal spread is 3 in 100,000 sockets), not a standard's.
   */
  peerOutlierMinC: number;
  peerOutlierZ: number;
  /**
   * Trip when Tj max is projected within this many stress-clock seconds. Default 60 s: several
   * telemetry intervals (rigs report every few seconds) for the trend to confirm, the command round
   * trip over MQTT and the rig's bias relay, with room to spare; raise it for slow telemetry.
   */
  horizonS: number;
  /**
   * The projection counts only when the current slope alone would reach Tj max within this many
   * horizons: curvature may shorten the time, not supply all of it (the oven's swing has little
   * slope and much curvature at each trough).
   */
  projectionRateFactor: number;
  /** Warn when Tj ≥ Tj max − marginC − warnExtraMarginC while rising above the baseline. */
  warnExtraMarginC: number;
  /** Warn when the projection is within this multiple of the trip horizon. */
  warnHorizonFactor: number;
  /** Warn at this estimated loop gain; trip at ≥ 1 while rising. */
  warnLoopGain: number;
  /** Look-back for trend and loop-gain estimates, stress-clock seconds. */
  windowS: number;
  /** Fewer bias-on samples than this in the window: only the temperature threshold applies. */
  minSamples: number;
  /**
   * Trend rules (projection, loop gain) wait until the bias-on stretch spans this many seconds:
   * just after bias is applied a settling approach still looks straight, and a straight-line
   * projection of it would cry wolf. Before that only the hard limit and the early zone rule
   * (rising, above its peers, within the margin zone) apply.
   */
  minTrendS: number;
  /** Standard errors a slope or curvature must exceed to count. */
  significanceZ: number;
  /** Smallest Tj slope (°C/s) that counts as rising. */
  minRiseCPerS: number;
  /** Case temperature must span this much in the window for a loop-gain estimate. */
  minCaseSpanC: number;
}

export const DEFAULT_PROTECTION_OPTIONS: ProtectionOptions = {
  marginC: 10,
  selfHeatAllowanceC: 3,
  marginLoopGain: 0.5,
  peerOutlierMinC: 10,
  peerOutlierZ: 4,
  horizonS: 60,
  projectionRateFactor: 2,
  warnExtraMarginC: 10,
  warnHorizonFactor: 5,
  warnLoopGain: 0.5,
  windowS: 300,
  minSamples: 8,
  minTrendS: 30,
  significanceZ: 4,
  minRiseCPerS: 0.002,
  minCaseSpanC: 1,
};

export type ProtectionAction = 'none' | 'warn' | 'trip';
export type ThetaCaSource = 'window' | 'identified' | 'none';

export interface SocketAssessment {
  /** Junction estimate at the latest sample; null with no samples. */
  tjC: number | null;
  /** Estimated loop gain θ·∂P/∂Tj; null when the window cannot resolve it. */
  loopGain: number | null;
  /** Projected stress-clock seconds until Tj max; null when Tj is not heading there. */
  secondsToTjMax: number | null;
  /** Fitted Tj slope at the latest sample (°C/s); null without a trend fit. */
  slopeCPerS: number | null;
  /** Case-to-chamber thermal resistance the loop gain used (°C/W); null without a fit. */
  thetaCaCPerW: number | null;
  /** Where thetaCaCPerW came from: protection's own window fit, or the socket's identified θca (larger). */
  thetaCaSource?: ThetaCaSource;
  action: ProtectionAction;
  reason: string;
}

// ---------------------------------------------------------------------------------------------

/** Seconds for Tj to climb `gap` °C given slope and (significant or zero) acceleration; null if never. */
export function projectSecondsToLimit(gap: number, slope: number, accel: number): number | null {
  if (gap <= 0) return 0;
  if (!(slope > 0)) return null;
  const lambda = accel / slope;
  if (Math.abs(lambda) < 1e-12) return gap / slope;
  const arg = 1 + (lambda * gap) / slope;
  if (arg <= 0) return null; // settles below the limit
  return Math.log(arg) / lambda;
}

/** Scratch for one assessment at a time (JS is single-threaded; nothing keeps them). */
const FIT = new Float64Array(FIT_LEN);
const REG = new Float64Array(REG_LEN);
/** estimateLoopGain's two results (scratch, read right after the call). */
let lgLoopGain: number | null = null;
let lgThetaCa: number | null = null;
let lgThetaSource: ThetaCaSource = 'none';

function estimateLoopGain(trend: SocketTrend, device: ProtectionDevice, opts: ProtectionOptions): void {
  const thetaJc = device.thetaJcCPerW;
  trend.caseRegressionTo(REG);
  lgLoopGain = null;
  lgThetaCa = null;
  lgThetaSource = 'none';
  if (!(REG[REG_SUM_P2] > 0)) return;
  const thetaCa = REG[REG_SUM_RISE_P] / REG[REG_SUM_P2];
  lgThetaCa = thetaCa;
  lgThetaSource = 'window';
  const n = REG[REG_N];
  const sxx = REG[REG_SXX];
  if (REG[REG_CASE_SPAN] < opts.minCaseSpanC || n < 3 || !(sxx > 0)) return;
  const s = REG[REG_SLOPE];
  const se = Math.sqrt(REG[REG_RSS] / (n - 2) / sxx);
  if (!(Math.abs(s) > opts.significanceZ * se)) return;
  const dPdTj = s / (1 + thetaJc * s);
  const thetaCaMax = Math.max(0, (device.thetaJaCPerW ?? DEFAULT_MAX_THETA_JA_C_PER_W) - thetaJc);
  // The identified θca may raise the window's θca and its bound, never lower them (shared/thermal/rules.ts).
  const used = protectionThetaCa({
    windowThetaCa: thetaCa,
    ratedBoundThetaCa: thetaCaMax,
    identifiedThetaCa: device.identifiedThetaCaCPerW ?? null,
  });
  lgThetaCa = used.thetaCa;
  lgThetaSource = used.source;
  lgLoopGain = (thetaJc + (used.thetaCa ?? 0)) * dPdTj;
}

/** A fitted loop gain far above 1 only says "runaway": the digits would be noise. */
const fmtGain = (g: number) => (g > 10 ? 'above 10' : g.toFixed(2));
const f1 = (x: number) => (Math.round(x * 10) / 10).toFixed(1);

/**
 * Decide for the latest sample of one socket.
 *
 * The criterion is the thermal-runaway stability condition of a device and its heat path: with
 * θ = θjc + θca and P(Tj) the dissipation, the loop is stable while the loop gain
 * G = θ·∂P/∂Tj < 1 and runs away once θ·∂P/∂Tj ≥ 1 (the thermal-stability condition
 * ∂P/∂Tj < 1/θ of bipolar transistor texts, e.g. Millman & Halkias, Integrated Electronics,
 * 1972, on thermal runaway — from memory). Under reverse bias P = V·I(T), so
 * G = θ·P·d(ln I)/dT: leakage and temperature feeding each other. A stable socket settles at
 * Ta + θ·P/(1 − G) wherever that is: a steady socket a few kelvin above its peers is spread, not
 * runaway.
 *
 * Trip when:
 * 1. Tj ≥ Tj max (the hard limit, whatever the trend); or
 * 2. the loop-gain estimate is ≥ 1 and Tj is (significantly) rising; or
 * 3. Tj max is projected within horizonS; or
 * 4. Tj ≥ Tj max − marginC (the margin zone) and Tj is still rising, and either the loop gain has
 *    reached marginLoopGain (approaching 1), or — before the trend is established (minTrendS) —
 *    the socket runs selfHeatAllowanceC above its peers (median) and is projected to reach Tj max
 *    within horizonS (a socket with no heat sinking from bias-on climbs from the zone's edge to Tj
 *    max in seconds).
 * 5. in the margin zone, Tj sits further above its peers' median than peerOutlierMinC and
 *    peerOutlierZ × their robust spread: not oven spread but a failing heat path (even if steady).
 * Warn when Tj is within a further warnExtraMarginC and rising above its baseline, the loop gain is
 * ≥ warnLoopGain, or the projection is within warnHorizonFactor × horizonS.
 */
export function assessSocket(
  history: SocketSample[],
  device: ProtectionDevice,
  options: Partial<ProtectionOptions> = {},
): SocketAssessment {
  const opts = { ...DEFAULT_PROTECTION_OPTIONS, ...options };
  const trend = new SocketTrend(opts.windowS, Math.max(history.length, 1));
  for (const s of history) trend.push(s, device.thetaJcCPerW);
  return assessTrend(trend, device, opts, opts.baselineTjC, opts.peerSpreadC ?? NaN);
}

/**
 * judgeTrend's numbers (scratch: read before the next call); NaN where the assessment has null —
 * none of them can be NaN otherwise (the fit needs a non-singular system, θca a positive Σ P²).
 */
const J = new Float64Array(6);
const J_TJ = 0;
const J_LOOP_GAIN = 1;
const J_SECONDS = 2;
const J_SLOPE = 3;
const J_THETA_CA = 4;
const J_RISING = 5;
let jText: string | null = null;
let jThetaSource: ThetaCaSource = 'none';
const orNull = (x: number) => (Number.isNaN(x) ? null : x);

/**
 * assessTrend's decision without its result object: live protection calls this for every
 * socket-sample and builds the assessment (assessTrend, same inputs, same answer) only when the
 * action is not 'none' or a reason is needed.
 */
export function judgeTrend(
  trend: SocketTrend,
  device: ProtectionDevice,
  opts: ProtectionOptions = DEFAULT_PROTECTION_OPTIONS,
  baselineTjC: number | undefined = opts.baselineTjC,
  peerSpreadC: number = opts.peerSpreadC ?? NaN,
): ProtectionAction {
  if (!trend.hasLast) {
    J.fill(NaN);
    J[J_RISING] = 0;
    jText = 'No samples yet';
    jThetaSource = 'none';
    return 'none';
  }
  const tj = trend.lastTjC;
  const tripAt = device.tjMaxC - opts.marginC;

  let slope: number | null = null;
  let seconds: number | null = null;
  let rising = false;
  let loopGain: number | null = null;
  let thetaCa: number | null = null;
  let thetaSource: ThetaCaSource = 'none';
  /** Before minTrendS: rising and projected to Tj max within horizonS (only the zone rules read it). */
  let earlyClimb = false;
  /** Seconds to Tj max at the current slope alone (Infinity when not rising). */
  let linearS = Infinity;

  if (trend.lastBiasOn && trend.count >= opts.minSamples) {
    const established = trend.spanS >= opts.minTrendS;
    if (trend.quadraticFitTo(FIT)) {
      const fitSlope = FIT[FIT_SLOPE];
      const up = fitSlope > opts.minRiseCPerS && fitSlope > opts.significanceZ * FIT[FIT_SLOPE_SE];
      const accel = Math.abs(FIT[FIT_ACCEL]) > opts.significanceZ * FIT[FIT_ACCEL_SE] ? FIT[FIT_ACCEL] : 0;
      const gap = device.tjMaxC - Math.max(FIT[FIT_C0], tj);
      const s = up ? projectSecondsToLimit(gap, fitSlope, accel) : null;
      // A projection that needs the curvature to get there in time must also be rising at a real
      // rate: the oven's control swing gives a small slope with a large curvature near each trough,
      // which, extrapolated as exponential growth, once "reached" the rating of a healthy socket
      // sitting 5 °C under it (tests/unit/safety/protection-at-rating.test.ts).
      linearS = up ? gap / fitSlope : Infinity;
      if (established) {
        slope = fitSlope;
        rising = up;
        seconds = s;
      }
    }
    if (established) {
      estimateLoopGain(trend, device, opts);
      loopGain = lgLoopGain;
      thetaCa = lgThetaCa;
      thetaSource = lgThetaSource;
    }
  }

  if (trend.lastBiasOn && trend.count >= 3 && trend.spanS < opts.minTrendS) {
    // Before the trend is established (a fit of few samples has an uncertain standard error, so
    // noise can pass its z test): a climb of at least selfHeatAllowanceC since bias came on, still
    // going at the last step at a rate that reaches Tj max within horizonS.
    const dt = trend.timeBack(0) - trend.timeBack(1);
    const rate = dt > 0 ? (tj - trend.tjBack(1)) / dt : 0;
    earlyClimb = tj - trend.tjBack(trend.count - 1) >= opts.selfHeatAllowanceC && rate > 0 && device.tjMaxC - tj < rate * opts.horizonS;
  }

  // No closures here: this runs for every socket-sample, and each one allocated.
  const tjMaxC = device.tjMaxC;
  const baseline = baselineTjC ?? trend.lastChamberC;
  const aboveBaseline = tj - baseline >= opts.selfHeatAllowanceC;
  const inZone = tj >= tripAt;
  let action: ProtectionAction = 'none';
  let text: string | null = null;
  if (tj >= tjMaxC) {
    action = 'trip';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} has reached ${device.ratedTjMaxC !== undefined && device.ratedTjMaxC < tjMaxC ? 'the run limit' : 'the rating'}`;
  } else if (loopGain !== null && loopGain >= 1 && rising) {
    action = 'trip';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} rising with loop gain ${fmtGain(loopGain)} ≥ 1: thermal runaway`;
  } else if (seconds !== null && seconds < opts.horizonS && linearS < opts.projectionRateFactor * opts.horizonS) {
    action = 'trip';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} projected to reach the rating in ${Math.round(seconds)} s`;
  } else if (inZone && rising && loopGain !== null && loopGain >= opts.marginLoopGain) {
    action = 'trip';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} is within ${opts.marginC} °C of the rating and still rising with loop gain ${fmtGain(loopGain)}: leakage and temperature feed each other`;
  } else if (
    inZone &&
    baselineTjC !== undefined &&
    peerSpreadC >= 0 &&
    tj - baselineTjC >= Math.max(opts.peerOutlierMinC, opts.peerOutlierZ * peerSpreadC)
  ) {
    action = 'trip';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} is within ${opts.marginC} °C of the rating and ${f1(tj - baselineTjC)} °C above its peers, beyond the board's spread (±${f1(peerSpreadC)} °C): its heat path is failing`;
  } else if (inZone && earlyClimb && aboveBaseline) {
    action = 'trip';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} is within ${opts.marginC} °C of the rating, ${f1(tj - baseline)} °C above its peers/chamber and climbing fast`;
  } else if (tj >= tripAt - opts.warnExtraMarginC && aboveBaseline && (rising || earlyClimb)) {
    action = 'warn';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} within ${opts.marginC + opts.warnExtraMarginC} °C of the rating and rising above its peers`;
  } else if (loopGain !== null && loopGain >= opts.warnLoopGain) {
    action = 'warn';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)}, loop gain ${loopGain.toFixed(2)}: strong thermal feedback`;
  } else if (seconds !== null && seconds < opts.warnHorizonFactor * opts.horizonS && linearS < opts.warnHorizonFactor * opts.horizonS) {
    action = 'warn';
    text = `${tjDescription(tj, tjMaxC, device.ratedTjMaxC)} projected to reach the rating in ${Math.round(seconds)} s`;
  }
  // With 'none' (the usual case) there is no text: Assessment builds the reason only if somebody reads it.
  J[J_TJ] = tj;
  J[J_LOOP_GAIN] = loopGain ?? NaN;
  J[J_SECONDS] = seconds ?? NaN;
  J[J_SLOPE] = slope ?? NaN;
  J[J_THETA_CA] = thetaCa ?? NaN;
  jThetaSource = thetaSource;
  J[J_RISING] = rising ? 1 : 0;
  jText = text;
  return action;
}

/**
 * assessSocket on a socket's incremental window (what live protection keeps per socket): the
 * trend must have been pushed with this device's θjc.
 */
export function assessTrend(
  trend: SocketTrend,
  device: ProtectionDevice,
  opts: ProtectionOptions = DEFAULT_PROTECTION_OPTIONS,
  baselineTjC: number | undefined = opts.baselineTjC,
  peerSpreadC: number = opts.peerSpreadC ?? NaN,
): SocketAssessment {
  if (!trend.hasLast)
    return {
      tjC: null,
      loopGain: null,
      secondsToTjMax: null,
      slopeCPerS: null,
      thetaCaCPerW: null,
      action: 'none',
      reason: 'No samples yet',
    };
  const action = judgeTrend(trend, device, opts, baselineTjC, peerSpreadC);
  return new Assessment(
    J[J_TJ],
    orNull(J[J_LOOP_GAIN]),
    orNull(J[J_SECONDS]),
    orNull(J[J_SLOPE]),
    orNull(J[J_THETA_CA]),
    action,
    jText,
    device.tjMaxC,
    J[J_RISING] === 1,
    jThetaSource,
  );
}

const tjDescription = (tj: number, tjMaxC: number, ratedC?: number) =>
  ratedC !== undefined && ratedC < tjMaxC
    ? `Tj ${f1(tj)} °C (run limit ${f1(tjMaxC)} °C: the plan's band top + ${RATED_STRESS_HEADROOM_K} K; rated ${f1(ratedC)} °C)`
    : `Tj ${f1(tj)} °C (max ${f1(tjMaxC)} °C)`;

class Assessment implements SocketAssessment {
  #text: string | null;
  readonly #tjMaxC: number;
  readonly #rising: boolean;

  constructor(
    readonly tjC: number,
    readonly loopGain: number | null,
    readonly secondsToTjMax: number | null,
    readonly slopeCPerS: number | null,
    readonly thetaCaCPerW: number | null,
    readonly action: ProtectionAction,
    text: string | null,
    tjMaxC: number,
    rising: boolean,
    readonly thetaCaSource: ThetaCaSource = 'none',
  ) {
    this.#text = text;
    this.#tjMaxC = tjMaxC;
    this.#rising = rising;
  }

  get reason(): string {
    if (this.#text === null) {
      const s = this.secondsToTjMax;
      const trend = !this.#rising
        ? ', not rising'
        : s === null
          ? ', rising and levelling off below the rating'
          : `, rising (rating in about ${Math.round(s)} s at this trend)`;
      this.#text = `${tjDescription(this.tjC, this.#tjMaxC)}${trend}`;
    }
    return this.#text;
  }

  toJSON() {
    const { tjC, loopGain, secondsToTjMax, slopeCPerS, thetaCaCPerW, thetaCaSource, action, reason } = this;
    return { tjC, loopGain, secondsToTjMax, slopeCPerS, thetaCaCPerW, thetaCaSource, action, reason };
  }
}
