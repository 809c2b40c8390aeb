/**
 * The thermal path's trend rule (pure, no I/O): Theil–Sen slope with Sen's interval, the
 * Mann–Kendall test, and the projection to the step rule's line. The rule and its constants are
 * stated once in ./rules.ts; tests/unit/thermal-trend.test.ts checks the estimators against
 * scipy.stats and jstat.
 */
import { errorFunction } from 'simple-statistics';
import {
  THERMAL_PATH_CONFIRM_FITS,
  THERMAL_PATH_RISE_FRACTION,
  TREND_ALPHA,
  TREND_HORIZON_H,
  TREND_MAX_EXTRAPOLATION,
  TREND_MAX_FITS,
  TREND_MIN_FITS,
  TREND_Z,
} from './rules';

export interface TrendPoint {
  /** Hours under stress (the rig's stress clock). */
  tH: number;
  thetaCPerW: number;
}

const sign = (v: number) => (v > 0 ? 1 : v < 0 ? -1 : 0);

const medianSorted = (s: ArrayLike<number>) => {
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};

/** Σ t(t−1)(2t+5) over groups of equal values (the ties' share of Var(S)). */
function tieTerm(values: number[]): number {
  const s = Float64Array.from(values).sort();
  let sum = 0;
  let run = 1;
  for (let i = 1; i <= s.length; i++) {
    if (i < s.length && s[i] === s[i - 1]) run++;
    else {
      if (run > 1) sum += run * (run - 1) * (2 * run + 5);
      run = 1;
    }
  }
  return sum;
}

export interface MannKendall {
  n: number;
  s: number;
  varS: number;
  /** Continuity-corrected: (S − 1)/√Var(S) for S > 0, (S + 1)/√Var(S) for S < 0, else 0. */
  z: number;
  /** One-sided p for a rising trend, 1 − Φ(z). */
  pRising: number;
  /** Kendall's τ_a = S / (n(n−1)/2). */
  tau: number;
}

/** The Mann–Kendall test on values in time order (Mann 1945; Kendall's tie-corrected variance). */
export function mannKendall(values: number[]): MannKendall {
  const n = values.length;
  let s = 0;
  for (let i = 0; i < n - 1; i++) for (let j = i + 1; j < n; j++) s += sign(values[j] - values[i]);
  const varS = (n * (n - 1) * (2 * n + 5) - tieTerm(values)) / 18;
  const z = varS > 0 ? (s > 0 ? (s - 1) / Math.sqrt(varS) : s < 0 ? (s + 1) / Math.sqrt(varS) : 0) : 0;
  return { n, s, varS, z, pRising: 1 - standardNormalCdf(z), tau: n > 1 ? s / ((n * (n - 1)) / 2) : 0 };
}

/** Φ(z) through the error function (simple-statistics; checked against jstat in the tests). */
export function standardNormalCdf(z: number): number {
  return 0.5 * (1 + errorFunction(z / Math.SQRT2));
}

export interface TheilSen {
  slope: number;
  /** median(y − slope·x) (the "joint" intercept). */
  intercept: number;
  low: number;
  high: number;
  /** Pairs with distinct x (Sen's N). */
  pairs: number;
}

/**
 * Theil–Sen: the median slope over pairs with distinct x, and Sen's (1968) distribution-free
 * interval: C = z·√Var with his eq. 2.6 variance (ties in x and in y removed), bounds at the
 * sorted slopes round((N − C)/2) − 1 and round((N + C)/2) (0-based, clipped), as
 * scipy.stats.theilslopes takes them. `z` is Φ⁻¹ of the interval's upper tail point.
 */
export function theilSen(x: number[], y: number[], z = TREND_Z): TheilSen {
  const n = x.length;
  // A typed array sorts numerically without a comparator (the hot part: n(n−1)/2 slopes).
  const all = new Float64Array((n * (n - 1)) / 2);
  let N = 0;
  for (let i = 0; i < n - 1; i++) {
    for (let j = i + 1; j < n; j++) {
      const dx = x[j] - x[i];
      if (dx !== 0) all[N++] = (y[j] - y[i]) / dx;
    }
  }
  if (N === 0) return { slope: NaN, intercept: NaN, low: NaN, high: NaN, pairs: 0 };
  const slopes = all.subarray(0, N).sort();
  const slope = medianSorted(slopes);
  const residuals = Float64Array.from(y, (v, i) => v - slope * x[i]).sort();
  const sigma = Math.sqrt((n * (n - 1) * (2 * n + 5) - tieTerm(x) - tieTerm(y)) / 18);
  const lo = Math.max(Math.round((N - z * sigma) / 2) - 1, 0);
  const hi = Math.min(Math.round((N + z * sigma) / 2), N - 1);
  return { slope, intercept: medianSorted(residuals), low: slopes[lo], high: slopes[hi], pairs: N };
}

export interface ThermalTrend {
  /** Fits used and the stress hours they span. */
  n: number;
  spanH: number;
  /** Theil–Sen slope of θ and its interval (TREND_INTERVAL_CONFIDENCE), °C/W per stress hour. */
  slopeCPerWPerH: number;
  lowCPerWPerH: number;
  highCPerWPerH: number;
  mkS: number;
  mkZ: number;
  /** One-sided Mann–Kendall p for a rise. */
  pValue: number;
  significant: boolean;
  /** The step rule's line: baseline × (1 + THERMAL_PATH_RISE_FRACTION). */
  limitThetaCPerW: number;
  /** The fitted line at the newest fit. */
  thetaNowCPerW: number;
  /** Stress hours from the newest fit until the line reaches the limit (0 if already there), null when not rising. */
  hoursToLimit: number | null;
  /** min(TREND_HORIZON_H, TREND_MAX_EXTRAPOLATION × spanH, hours left in the run). */
  horizonH: number;
  /** Significant, rising, and reaching the limit within the horizon. */
  fires: boolean;
}

/**
 * The trend rule on a socket's trend points (oldest first) against its baseline; null below
 * TREND_MIN_FITS points. `remainingH`: stress hours left in the run's plan, when known.
 */
export function evaluateThermalTrend(
  points: TrendPoint[],
  baselineThetaCPerW: number,
  remainingH: number | null = null,
): ThermalTrend | null {
  if (points.length < TREND_MIN_FITS || !(baselineThetaCPerW > 0)) return null;
  const x = points.map((p) => p.tH);
  const y = points.map((p) => p.thetaCPerW);
  const ts = theilSen(x, y);
  if (!Number.isFinite(ts.slope)) return null;
  const mk = mannKendall(y);
  const tNow = x[x.length - 1];
  const spanH = tNow - x[0];
  const limit = baselineThetaCPerW * (1 + THERMAL_PATH_RISE_FRACTION);
  const thetaNow = ts.intercept + ts.slope * tNow;
  const hoursToLimit = ts.slope > 0 ? Math.max(0, (limit - thetaNow) / ts.slope) : null;
  const horizonH = Math.max(0, Math.min(TREND_HORIZON_H, TREND_MAX_EXTRAPOLATION * spanH, remainingH ?? Infinity));
  const significant = mk.pRising < TREND_ALPHA;
  return {
    n: points.length,
    spanH,
    slopeCPerWPerH: ts.slope,
    lowCPerWPerH: ts.low,
    highCPerWPerH: ts.high,
    mkS: mk.s,
    mkZ: mk.z,
    pValue: mk.pRising,
    significant,
    limitThetaCPerW: limit,
    thetaNowCPerW: thetaNow,
    hoursToLimit,
    horizonH,
    fires: significant && hoursToLimit !== null && hoursToLimit <= horizonH,
  };
}

/**
 * The trend's series for one socket: a good fit joins when its window starts after the previous
 * point's window ended (independent noise) and the spacing has passed; above TREND_MAX_FITS every
 * other point is dropped and the spacing doubles. Evaluates the rule when a point joins and keeps
 * the raise/clear confirmation (THERMAL_PATH_CONFIRM_FITS evaluations in a row).
 */
export class ThermalTrendSeries {
  points: TrendPoint[] = [];
  /** Least stress hours between points (grows as the series is thinned). */
  private spacingH = 0;
  private firing = 0;
  private quiet = 0;
  active = false;
  latest: ThermalTrend | null = null;

  /** Restored points (a restarted server reads the stored good fits back); the rule waits for new evaluations. */
  constructor(restored: Array<TrendPoint & { windowH?: number }> = []) {
    for (const p of restored) this.add(p, p.windowH ?? 0);
  }

  /**
   * Offer a good fit (its newest sample at `tH`, its window spanning `windowH`); true when it joined
   * the series (the rule was then evaluated: `latest`).
   */
  offer(p: TrendPoint, windowH: number, baselineThetaCPerW: number, remainingH: number | null): boolean {
    if (!this.add(p, windowH)) return false;
    const t = evaluateThermalTrend(this.points, baselineThetaCPerW, remainingH);
    this.latest = t;
    if (t?.fires) {
      this.firing++;
      this.quiet = 0;
      if (this.firing >= THERMAL_PATH_CONFIRM_FITS) this.active = true;
    } else {
      this.quiet++;
      this.firing = 0;
      if (this.quiet >= THERMAL_PATH_CONFIRM_FITS) this.active = false;
    }
    return true;
  }

  private add(p: TrendPoint, windowH: number): boolean {
    if (!Number.isFinite(p.tH) || !Number.isFinite(p.thetaCPerW)) return false;
    const last = this.points[this.points.length - 1];
    if (last && p.tH - last.tH < Math.max(windowH, this.spacingH)) return false;
    this.points.push(p);
    if (this.points.length > TREND_MAX_FITS) {
      // Keep the newest and every other one before it: the span stays, the spacing doubles.
      const n = this.points.length;
      this.points = this.points.filter((_, i) => (n - 1 - i) % 2 === 0);
      const gaps = this.points.slice(1).map((q, i) => q.tH - this.points[i].tH);
      this.spacingH = Math.min(...gaps);
    }
    return true;
  }
}
