/**
 * One socket's thermal path over a run (pure, no I/O): fed every telemetry sample, it decides
 * when to identify (bias-on, a power step, and periodically from the device's own slow power
 * changes), keeps the run's first good identification as the socket's baseline and says when the
 * path has degraded (θ above baseline × (1 + THERMAL_PATH_RISE_FRACTION) for
 * THERMAL_PATH_CONFIRM_FITS good fits in a row) or recovered. The server's tracker keeps one per
 * socket; tests drive it straight from the simulator's physics.
 *
 * The socket's offset from the chamber is read while bias is off (the mean rise of the last settled
 * off samples); until one is seen the chamber is taken as the socket's ambient (offset 0).
 */
import { identifySocketThermal, type ThermalIdentification, type ThermalSample } from './identify';
import {
  BASELINE_AGREE_FITS,
  BASELINE_AGREE_FRACTION,
  THERMAL_PATH_CONFIRM_FITS,
  THERMAL_PATH_RISE_FRACTION,
  TREND_SETTLE_WINDOWS,
} from './rules';
import { ThermalTrendSeries, type ThermalTrend, type TrendPoint } from './trend';

export type ThermalTrigger = 'bias-on' | 'power-step' | 'periodic';
export type OffsetBasis = 'bias-off' | 'chamber';

export interface TrackSample extends ThermalSample {
  biasOn: boolean;
}

export interface TrackOptions {
  /** Samples in an identification window (a step's window starts with the sample before the step). */
  windowSamples: number;
  /** Between windows with no step, a periodic identification every this many samples. */
  periodicSamples: number;
  /** A power change by more than this fraction of the recent mean starts a step window. */
  powerStepFraction: number;
  /** Bias-off samples averaged for the offset (the latest ones, once settled). */
  offSamples: number;
}

export const DEFAULT_TRACK_OPTIONS: TrackOptions = { windowSamples: 20, periodicSamples: 5, powerStepFraction: 0.2, offSamples: 3 };

export interface TrackEvent {
  trigger: ThermalTrigger;
  fit: ThermalIdentification;
  offsetBasis: OffsetBasis;
  /** The run's first good θ for this socket (after this fit), or null. */
  baselineThetaCPerW: number | null;
  /** θ / baseline − 1 for a good fit with a baseline. */
  riseFraction: number | null;
  /** 'raise' while the path is judged degraded (confirmed; repeated each fit above), 'clear' when it has recovered. */
  flag: 'raise' | 'clear' | null;
  /** With 'raise': which rule holds the flag — the step (θ past the line) before the trend (on course to it). */
  rule: 'step' | 'trend' | null;
  /** The trend rule's latest evaluation (./trend.ts), or null before it has enough fits. */
  trend: ThermalTrend | null;
  /** This fit joined the trend's series (and the rule was evaluated). */
  trendPoint: boolean;
}

export class SocketThermalTrack {
  private readonly opts: TrackOptions;
  private window: TrackSample[] = [];
  private off: TrackSample[] = [];
  private prev: TrackSample | null = null;
  private sinceFit = 0;
  /** Biased samples since the latest bias-on or power step (the trend waits for the case to settle). */
  private sinceStep = 0;
  private pendingTrigger: ThermalTrigger | null = null;
  private offsetC: number | null = null;
  baselineThetaCPerW: number | null;
  /** The latest good identification, or null. */
  latestGood: ThermalIdentification | null = null;
  flagged: boolean;
  /** The step rule's own state (θ above the line for THERMAL_PATH_CONFIRM_FITS fits). */
  private stepFlagged: boolean;
  /** The trend rule's series (good fits after the baseline). */
  readonly trend: ThermalTrendSeries;
  /** Stress hours left in the run's plan (set by the server's tracker), null when unknown. */
  remainingH: number | null = null;
  private above = 0;
  private below = 0;
  /** The latest good θ values while no baseline is set (BASELINE_AGREE_FITS of them). */
  private recentGood: number[] = [];

  constructor(
    opts: Partial<TrackOptions> = {},
    restored: { baselineThetaCPerW?: number | null; flagged?: boolean; trendPoints?: Array<TrendPoint & { windowH: number }> } = {},
  ) {
    this.opts = { ...DEFAULT_TRACK_OPTIONS, ...opts };
    this.baselineThetaCPerW = restored.baselineThetaCPerW ?? null;
    this.flagged = restored.flagged ?? false;
    this.stepFlagged = this.flagged;
    this.trend = new ThermalTrendSeries(restored.trendPoints ?? []);
  }

  get offsetBasis(): OffsetBasis {
    return this.offsetC === null ? 'chamber' : 'bias-off';
  }

  /**
   * Values held for the socket (window samples, bias-off samples, recent good θ): bounded by the
   * options however long the run (windowSamples + 3 × offSamples + BASELINE_AGREE_FITS).
   */
  get heldValues(): number {
    return this.window.length + this.off.length + this.recentGood.length;
  }

  /** One sample (stress-clock order); returns an event when an identification was made. */
  push(s: TrackSample): TrackEvent | null {
    const prev = this.prev;
    if (prev && s.tS <= prev.tS) return null; // a repeat or an older sample
    this.prev = s;
    if (!s.biasOn) {
      this.sinceStep = 0;
      this.off.push(s);
      if (this.off.length > this.opts.offSamples * 3) this.off.shift();
      this.window = [];
      this.pendingTrigger = null;
      return null;
    }
    if (prev && !prev.biasOn) {
      this.offsetC = this.offsetFromOff() ?? this.offsetC;
      this.window = [prev];
      this.pendingTrigger = 'bias-on';
      this.sinceFit = 0;
      this.sinceStep = 0;
    } else if (this.isPowerStep(s)) {
      this.window = this.window.slice(-1);
      this.pendingTrigger = 'power-step';
      this.sinceFit = 0;
      this.sinceStep = 0;
    }
    this.off = [];
    this.window.push(s);
    if (this.window.length > this.opts.windowSamples) this.window.shift();
    this.sinceFit++;
    this.sinceStep++;
    if (this.window.length < this.opts.windowSamples) return null;
    if (this.pendingTrigger === null && this.sinceFit < this.opts.periodicSamples) return null;
    const trigger = this.pendingTrigger ?? 'periodic';
    this.pendingTrigger = null;
    this.sinceFit = 0;
    return this.identify(trigger);
  }

  private isPowerStep(s: TrackSample): boolean {
    const recent = this.window.slice(-5);
    if (recent.length < 3) return false;
    const m = recent.reduce((t, x) => t + x.powerW, 0) / recent.length;
    return m > 0 ? Math.abs(s.powerW - m) > this.opts.powerStepFraction * m : s.powerW > 0;
  }

  /** Mean rise of the settled bias-off samples (their spread within 0.5 K), or null. */
  private offsetFromOff(): number | null {
    const last = this.off.slice(-this.opts.offSamples);
    if (last.length < this.opts.offSamples) return null;
    const rises = last.map((x) => x.caseC - x.ambientC);
    if (Math.max(...rises) - Math.min(...rises) > 0.5) return null;
    return rises.reduce((t, v) => t + v, 0) / rises.length;
  }

  /** The median of the last BASELINE_AGREE_FITS good θ once they agree within BASELINE_AGREE_FRACTION, else null. */
  private settledBaseline(theta: number): number | null {
    this.recentGood.push(theta);
    if (this.recentGood.length > BASELINE_AGREE_FITS) this.recentGood.shift();
    if (this.recentGood.length < BASELINE_AGREE_FITS) return null;
    const sorted = [...this.recentGood].sort((a, b) => a - b);
    if (sorted[sorted.length - 1] > sorted[0] * (1 + BASELINE_AGREE_FRACTION)) return null;
    return sorted[Math.floor(sorted.length / 2)];
  }

  private identify(trigger: ThermalTrigger): TrackEvent {
    // A step's window keeps the sample before the step (bias off): power 0 there is the step's foot.
    const samples = trigger === 'periodic' ? this.window.filter((x) => x.biasOn) : this.window;
    const fit = identifySocketThermal(samples, { offsetC: this.offsetC ?? 0, driftTerm: trigger === 'periodic' });
    let flag: TrackEvent['flag'] = null;
    let rule: TrackEvent['rule'] = null;
    let riseFraction: number | null = null;
    let trendPoint = false;
    if (fit.good && fit.thetaCPerW !== null) {
      this.latestGood = fit;
      if (this.baselineThetaCPerW === null) this.baselineThetaCPerW = this.settledBaseline(fit.thetaCPerW);
    }
    if (fit.good && fit.thetaCPerW !== null && this.baselineThetaCPerW !== null) {
      riseFraction = fit.thetaCPerW / this.baselineThetaCPerW - 1;
      if (riseFraction > THERMAL_PATH_RISE_FRACTION) {
        this.above++;
        this.below = 0;
        // Raised once confirmed, then repeated with each fit above the limit (the alarm's numbers refresh).
        if (this.above >= THERMAL_PATH_CONFIRM_FITS) {
          this.stepFlagged = true;
          flag = 'raise';
          rule = 'step';
        }
      } else {
        this.below++;
        this.above = 0;
        if (this.stepFlagged && this.below >= THERMAL_PATH_CONFIRM_FITS) this.stepFlagged = false;
      }
      // The trend rule on the good fits after the baseline: a fit joins when its window does not overlap the last point's.
      const windowH = (fit.samples * (fit.sampleIntervalS ?? 0)) / 3600;
      const tH = (this.prev?.tS ?? 0) / 3600;
      const settled = this.sinceStep - this.window.length >= TREND_SETTLE_WINDOWS * this.opts.windowSamples;
      trendPoint = settled && this.trend.offer({ tH, thetaCPerW: fit.thetaCPerW }, windowH, this.baselineThetaCPerW, this.remainingH);
      if (flag === null && trendPoint && this.trend.active) {
        flag = 'raise';
        rule = 'trend';
      }
      const flagged = this.stepFlagged || this.trend.active;
      if (this.flagged && !flagged) flag = 'clear';
      this.flagged = flagged;
    }
    return {
      trigger,
      fit,
      offsetBasis: this.offsetBasis,
      baselineThetaCPerW: this.baselineThetaCPerW,
      riseFraction,
      flag,
      rule,
      trend: this.trend.latest,
      trendPoint,
    };
  }
}
