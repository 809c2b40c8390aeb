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
 *   significant; otherwise null (the window is too steady to show the feedback).
 *   Known bias: while the socket is still warming, part of the heat goes into thermal mass, the case
 *   sits below θca·P and the fitted θca (hence the loop gain) reads low. The loop-gain rule therefore
 *   catches quasi-static runaway (a chamber or socket drifting past its critical point); fast
 *   transients are caught by the time-to-limit projection and the temperature threshold.
 */
import { SocketTrend, type TrendSample } from './socket-trend';

export { SocketTrend };

/** One telemetry sample of a socket: stress-clock time (s), case, |V| (V), |I| (A), chamber, bias on. */
export type SocketSample = TrendSample;

export interface ProtectionDevice {
  tjMaxC: number;
  thetaJcCPerW: number;
}

export interface ProtectionOptions {
  /**
   * Trip when Tj ≥ Tj max − marginC AND the socket runs at least selfHeatAllowanceC above its
   * baseline (always at Tj ≥ Tj max). A stress meant to hold the junction near its rating (HTRB at
   * 145 °C on a 150 °C part, powered life at Tj max − 5 °C) is not a runaway by itself; a socket
   * heating beyond its peers on the same board is.
   */
  marginC: number;
  /** See marginC: °C a socket must run above its baseline for the margin rule to apply. */
  selfHeatAllowanceC: number;
  /**
   * The junction temperature this socket is expected to run at: the median of its energised peers
   * on the same rig (the monitor passes it). Absent: the chamber temperature of the latest sample.
   */
  baselineTjC?: number;
  /**
   * Trip when Tj max is projected within this many stress-clock seconds. Default 60 s: several
   * telemetry intervals (rigs report every few seconds) for the trend to confirm, the command round
   * trip over MQTT and the rig's bias relay, with room to spare; raise it for slow telemetry.
   */
  horizonS: number;
  /** Warn when Tj ≥ Tj max − marginC − warnExtraMarginC. */
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
   * projection of it would cry wolf. The temperature threshold applies from the first sample.
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
  horizonS: 60,
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

export interface SocketAssessment {
  /** Junction estimate at the latest sample; null with no samples. */
  tjC: number | null;
  /** Estimated loop gain θ·∂P/∂Tj; null when the window cannot resolve it. */
  loopGain: number | null;
  /** Projected stress-clock seconds until Tj max; null when Tj is not heading there. */
  secondsToTjMax: number | null;
  /** Fitted Tj slope at the latest sample (°C/s); null without a trend fit. */
  slopeCPerS: number | null;
  /** Fitted case-to-chamber thermal resistance (°C/W); null without a fit. */
  thetaCaCPerW: number | null;
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

function estimateLoopGain(trend: SocketTrend, thetaJc: number, opts: ProtectionOptions): { loopGain: number | null; thetaCa: number | null } {
  const r = trend.caseRegression();
  if (!(r.sumP2 > 0)) return { loopGain: null, thetaCa: null };
  const thetaCa = r.sumRiseP / r.sumP2;
  if (r.caseSpanC < opts.minCaseSpanC || r.n < 3 || !(r.sxx > 0)) return { loopGain: null, thetaCa };
  const s = r.slope;
  const se = Math.sqrt(r.rss / (r.n - 2) / r.sxx);
  if (!(Math.abs(s) > opts.significanceZ * se)) return { loopGain: null, thetaCa };
  const dPdTj = s / (1 + thetaJc * s);
  return { loopGain: (thetaJc + Math.max(0, thetaCa)) * dPdTj, thetaCa };
}

const f1 = (x: number) => (Math.round(x * 10) / 10).toFixed(1);

/**
 * Decide for the latest sample of one socket. Trip when:
 * 1. Tj ≥ Tj max, or Tj ≥ Tj max − marginC while the socket runs selfHeatAllowanceC above its
 *    baseline (peers' median junction, else the chamber); or
 * 2. the loop-gain estimate is ≥ 1 and Tj is (significantly) rising; or
 * 3. Tj max is projected within horizonS.
 * Warn when Tj is within a further warnExtraMarginC, the loop gain is ≥ warnLoopGain, or the
 * projection is within warnHorizonFactor × horizonS.
 */
export function assessSocket(
  history: SocketSample[],
  device: ProtectionDevice,
  options: Partial<ProtectionOptions> = {},
): SocketAssessment {
  const opts = { ...DEFAULT_PROTECTION_OPTIONS, ...options };
  const trend = new SocketTrend(opts.windowS, Math.max(history.length, 1));
  for (const s of history) trend.push(s, device.thetaJcCPerW);
  return assessTrend(trend, device, opts, opts.baselineTjC);
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
): SocketAssessment {
  if (!trend.hasLast) return { tjC: null, loopGain: null, secondsToTjMax: null, slopeCPerS: null, thetaCaCPerW: null, action: 'none', reason: 'No samples yet' };
  const tj = trend.lastTjC;
  const tripAt = device.tjMaxC - opts.marginC;

  let slope: number | null = null;
  let seconds: number | null = null;
  let rising = false;
  let loopGain: number | null = null;
  let thetaCa: number | null = null;

  if (trend.lastBiasOn && trend.count >= opts.minSamples && trend.spanS >= opts.minTrendS) {
    const fit = trend.quadraticFit();
    if (fit) {
      slope = fit.slope;
      rising = fit.slope > opts.minRiseCPerS && fit.slope > opts.significanceZ * fit.slopeSe;
      const accel = Math.abs(fit.accel) > opts.significanceZ * fit.accelSe ? fit.accel : 0;
      if (rising) seconds = projectSecondsToLimit(device.tjMaxC - Math.max(fit.c0, tj), fit.slope, accel);
    }
    ({ loopGain, thetaCa } = estimateLoopGain(trend, device.thetaJcCPerW, opts));
  }

  const result = (action: ProtectionAction, text: string | null) => new Assessment(tj, loopGain, seconds, slope, thetaCa, action, text, device.tjMaxC, rising);
  const tjText = () => tjDescription(tj, device.tjMaxC);

  const baseline = baselineTjC ?? trend.lastChamberC;
  const aboveBaseline = tj - baseline >= opts.selfHeatAllowanceC;
  if (tj >= device.tjMaxC) return result('trip', `${tjText()} has reached the rating`);
  if (tj >= tripAt && aboveBaseline) {
    return result('trip', `${tjText()} is within ${opts.marginC} °C of the rating and ${f1(tj - baseline)} °C above its peers/chamber`);
  }
  if (loopGain !== null && loopGain >= 1 && rising) return result('trip', `${tjText()} rising with loop gain ${loopGain.toFixed(2)} ≥ 1: thermal runaway`);
  if (seconds !== null && seconds < opts.horizonS) return result('trip', `${tjText()} projected to reach the rating in ${Math.round(seconds)} s`);
  if (tj >= tripAt - opts.warnExtraMarginC && aboveBaseline) return result('warn', `${tjText()} within ${opts.marginC + opts.warnExtraMarginC} °C of the rating`);
  if (loopGain !== null && loopGain >= opts.warnLoopGain) return result('warn', `${tjText()}, loop gain ${loopGain.toFixed(2)}: strong thermal feedback`);
  if (seconds !== null && seconds < opts.warnHorizonFactor * opts.horizonS) return result('warn', `${tjText()} projected to reach the rating in ${Math.round(seconds)} s`);
  // The usual case: nothing to do. Its reason is text for people, built only if somebody reads it.
  return result('none', null);
}

const tjDescription = (tj: number, tjMaxC: number) => `Tj ${f1(tj)} °C (max ${f1(tjMaxC)} °C)`;

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
  ) {
    this.#text = text;
    this.#tjMaxC = tjMaxC;
    this.#rising = rising;
  }

  get reason(): string {
    if (this.#text === null) {
      const s = this.secondsToTjMax;
      const trend = !this.#rising ? ', not rising' : s === null ? ', rising and levelling off below the rating' : `, rising (rating in about ${Math.round(s)} s at this trend)`;
      this.#text = `${tjDescription(this.tjC, this.#tjMaxC)}${trend}`;
    }
    return this.#text;
  }

  toJSON() {
    const { tjC, loopGain, secondsToTjMax, slopeCPerS, thetaCaCPerW, action, reason } = this;
    return { tjC, loopGain, secondsToTjMax, slopeCPerS, thetaCaCPerW, action, reason };
  }
}
