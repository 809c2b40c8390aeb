/**
 * Lot drift statistics: per-device change against failure criteria, lot summaries,
 * degradation to pseudo-failure time, individuals control chart with run rules, Welch t.
 * Pure functions, no I/O; descriptive statistics from simple-statistics, t distribution from jstat.
 */
import { jStat } from 'jstat';
import { max, mean, min, quantileSorted, sampleStandardDeviation, sum } from 'simple-statistics';
import type { Criteria } from '../schemas/plans';

const KELVIN_OFFSET = 273.15;
/** Relative tolerance on limit comparisons so a reading exactly on a limit (e.g. 92 vs 80 ± 15 %) passes. */
const LIMIT_EPS = 1e-9;

/**
 * Gain measured at `measuredC`, referred to `referenceC` with the gain–temperature law
 * β(T) = β_ref·(T/T_ref)^XTB (kelvin): hFE_ref = hFE / (T/T_ref)^XTB.
 */
export function normaliseGainToReference(p: { hfe: number; measuredC: number; referenceC: number; xtb: number }): number {
  return p.hfe / Math.pow((p.measuredC + KELVIN_OFFSET) / (p.referenceC + KELVIN_OFFSET), p.xtb);
}

/** Readings within this many °C of the reference temperature are used as measured. */
export const GAIN_REFERENCE_TOLERANCE_C = 0.5;

export interface GainReference {
  referenceC: number;
  xtb: number;
}

/** hFE referred to the reference temperature, and whether (and how) it was converted. */
export function referredGain(
  hfe: number | null,
  measuredC: number,
  g: GainReference,
): { hfe: number | null; normalised: boolean; note: string | null } {
  if (hfe === null) return { hfe: null, normalised: false, note: null };
  if (Math.abs(measuredC - g.referenceC) <= GAIN_REFERENCE_TOLERANCE_C) return { hfe, normalised: false, note: null };
  const referred = normaliseGainToReference({ hfe, measuredC, referenceC: g.referenceC, xtb: g.xtb });
  return {
    hfe: referred,
    normalised: true,
    note: `hFE ${+hfe.toPrecision(4)} measured at ${+measuredC.toFixed(1)} °C, referred to ${g.referenceC} °C with XTB ${g.xtb}: ${+referred.toPrecision(4)}`,
  };
}

// ---------------------------------------------------------------------------------------------
// Device drift against criteria
// ---------------------------------------------------------------------------------------------

export interface DeviceReading {
  hfe: number | null;
  icboA: number | null;
  vcesatV: number | null;
}

export type DriftParameter = 'hfe' | 'icbo' | 'vcesat';

export interface ParameterDrift {
  parameter: DriftParameter;
  initial: number | null;
  reading: number | null;
  /** (reading − initial) / initial × 100; null when not measured or initial is 0. */
  changePct: number | null;
  /** reading / initial; null when not measured or initial is 0. */
  ratio: number | null;
  /** reading − initial in the parameter's unit (A for ICBO, V for VCE(sat)). */
  delta: number | null;
  /** Allowed band for the reading [low, high] (same unit as the reading). */
  allowed: { low: number; high: number } | null;
  /** null when the parameter was not measured at both points. */
  pass: boolean | null;
  reason: string;
}

export interface DeviceDrift {
  parameters: ParameterDrift[];
  /** True when at least one parameter was judged and none failed. */
  pass: boolean;
  failed: DriftParameter[];
}

const fmtA = (a: number): string => {
  const abs = Math.abs(a);
  if (abs >= 1e-3) return `${+(a * 1e3).toPrecision(4)} mA`;
  if (abs >= 1e-6) return `${+(a * 1e6).toPrecision(4)} µA`;
  return `${+(a * 1e9).toPrecision(4)} nA`;
};

function notMeasured(parameter: DriftParameter, initial: number | null, reading: number | null): ParameterDrift {
  return {
    parameter,
    initial,
    reading,
    changePct: null,
    ratio: null,
    delta: null,
    allowed: null,
    pass: null,
    reason: initial === null ? 'No time-zero value' : 'Not measured at this read point',
  };
}

/**
 * The ICBO ratio (reading / time zero) at which a device fails the plan's leakage criterion: the
 * allowed change is max((leakageMultiple − 1) × initial, leakageFloorA) (deviceDrift below), so the
 * ratio limit is 1 + that change / initial. null without a positive time-zero reading.
 */
export function icboRatioLimit(initialA: number | null, c: Pick<Criteria, 'leakageMultiple' | 'leakageFloorA'>): number | null {
  if (initialA === null || !(initialA > 0)) return null;
  return 1 + Math.max((c.leakageMultiple - 1) * initialA, c.leakageFloorA) / initialA;
}

const ratioOf = (r: number, i: number) => (i !== 0 ? r / i : null);
const pctOf = (r: number, i: number) => (i !== 0 ? ((r - i) / i) * 100 : null);

/**
 * Change of each parameter from time zero and pass/fail against the plan's criteria
 * (MIL-PRF-19500 delta limits by default):
 * - hFE: |change| ≤ hfeChangePct % of the time-zero value.
 * - ICBO: |change| ≤ max((leakageMultiple − 1) × initial, leakageFloorA). With the defaults
 *   (multiple 2, floor 200 nA) this is "change ≤ 100 % of initial or 200 nA, whichever is
 *   greater", so the reading may reach max(2 × initial, initial + 200 nA). The floor is read
 *   as an allowed change, not an absolute ceiling: 50 nA → 240 nA passes (limit 250 nA).
 * - VCE(sat): |change| ≤ vcesatShiftV.
 * A parameter missing at either point is reported and left out of the verdict.
 */
export function deviceDrift(p: {
  timeZero: DeviceReading;
  reading: DeviceReading;
  criteria: Criteria;
  /** false: `reason` left empty (bulk judging that never shows it) */ reasons?: boolean;
}): DeviceDrift {
  const { timeZero: t0, reading: r, criteria: c } = p;
  const say = p.reasons !== false;
  const parameters: ParameterDrift[] = [];

  if (t0.hfe === null || r.hfe === null) parameters.push(notMeasured('hfe', t0.hfe, r.hfe));
  else {
    const band = { low: t0.hfe * (1 - c.hfeChangePct / 100), high: t0.hfe * (1 + c.hfeChangePct / 100) };
    const changePct = pctOf(r.hfe, t0.hfe);
    const pass = changePct !== null && Math.abs(changePct) <= c.hfeChangePct * (1 + LIMIT_EPS);
    parameters.push({
      parameter: 'hfe',
      initial: t0.hfe,
      reading: r.hfe,
      changePct,
      ratio: ratioOf(r.hfe, t0.hfe),
      delta: r.hfe - t0.hfe,
      allowed: band,
      pass,
      reason: !say
        ? ''
        : pass
          ? `hFE ${r.hfe} within ±${c.hfeChangePct} % of ${t0.hfe}`
          : `hFE ${r.hfe} outside ±${c.hfeChangePct} % of ${t0.hfe} (allowed ${+band.low.toPrecision(4)}–${+band.high.toPrecision(4)})`,
    });
  }

  if (t0.icboA === null || r.icboA === null) parameters.push(notMeasured('icbo', t0.icboA, r.icboA));
  else {
    const allowedChange = Math.max((c.leakageMultiple - 1) * t0.icboA, c.leakageFloorA);
    const delta = r.icboA - t0.icboA;
    const pass = Math.abs(delta) <= allowedChange * (1 + LIMIT_EPS);
    const allowed = { low: Math.max(0, t0.icboA - allowedChange), high: t0.icboA + allowedChange };
    parameters.push({
      parameter: 'icbo',
      initial: t0.icboA,
      reading: r.icboA,
      changePct: pctOf(r.icboA, t0.icboA),
      ratio: ratioOf(r.icboA, t0.icboA),
      delta,
      allowed,
      pass,
      reason: !say
        ? ''
        : `ICBO ${fmtA(r.icboA)} from ${fmtA(t0.icboA)}: change ${fmtA(delta)} ${pass ? 'within' : 'beyond'} the allowed ${fmtA(allowedChange)}`,
    });
  }

  if (t0.vcesatV === null || r.vcesatV === null) parameters.push(notMeasured('vcesat', t0.vcesatV, r.vcesatV));
  else {
    const delta = r.vcesatV - t0.vcesatV;
    const pass = Math.abs(delta) <= c.vcesatShiftV * (1 + LIMIT_EPS);
    parameters.push({
      parameter: 'vcesat',
      initial: t0.vcesatV,
      reading: r.vcesatV,
      changePct: pctOf(r.vcesatV, t0.vcesatV),
      ratio: ratioOf(r.vcesatV, t0.vcesatV),
      delta,
      allowed: { low: t0.vcesatV - c.vcesatShiftV, high: t0.vcesatV + c.vcesatShiftV },
      pass,
      reason: !say
        ? ''
        : `VCE(sat) shifted ${+(delta * 1000).toFixed(1)} mV, ${pass ? 'within' : 'beyond'} ±${+(c.vcesatShiftV * 1000).toFixed(1)} mV`,
    });
  }

  const failed = parameters.filter((x) => x.pass === false).map((x) => x.parameter);
  const judged = parameters.filter((x) => x.pass !== null).length;
  return { parameters, pass: judged > 0 && failed.length === 0, failed };
}

// ---------------------------------------------------------------------------------------------
// Lot summary
// ---------------------------------------------------------------------------------------------

export interface LotDriftSummary {
  n: number;
  mean: number;
  /** Sample standard deviation (n − 1); null for a single value. */
  sd: number | null;
  min: number;
  max: number;
  p5: number;
  p25: number;
  median: number;
  p75: number;
  p95: number;
}

/** Descriptive summary of one drift parameter across a lot; quantiles by linear interpolation (R type 7). */
export function lotDriftSummary(values: number[]): LotDriftSummary {
  if (values.length === 0) throw new RangeError('no values to summarise');
  const sorted = [...values].sort((a, b) => a - b);
  const q = (pr: number) => quantileSorted(sorted, pr);
  return {
    n: values.length,
    mean: mean(values),
    sd: values.length > 1 ? sampleStandardDeviation(values) : null,
    min: min(values),
    max: max(values),
    p5: q(0.05),
    p25: q(0.25),
    median: q(0.5),
    p75: q(0.75),
    p95: q(0.95),
  };
}

// ---------------------------------------------------------------------------------------------
// Degradation → pseudo-failure time (NIST e-Handbook §8.4.2.3)
// ---------------------------------------------------------------------------------------------

export type DegradationModel = 'linear-origin' | 'log-ratio-origin';

export interface PseudoFailure {
  /** Hours at which the fitted path reaches the limit; null when it never does (moves away or is flat). */
  hours: number | null;
  /** Fitted slope per hour of the transformed change. */
  slope: number;
  model: DegradationModel;
}

/**
 * Fit one device's degradation path and solve for the hour it crosses the failure limit.
 * - 'linear-origin': change (e.g. % hFE) = b·t, least squares through the origin; limit in the same unit.
 * - 'log-ratio-origin': ln(ratio) = b·t (for leakage ratios reading/initial); limit is a ratio (e.g. 5).
 * Through-origin least squares: b = Σ t·y / Σ t².
 */
export function pseudoFailureTime(p: { hours: number[]; changes: number[]; limit: number; model: DegradationModel }): PseudoFailure {
  if (p.hours.length !== p.changes.length || p.hours.length === 0) {
    throw new RangeError('hours and changes must be non-empty and of equal length');
  }
  const transform = p.model === 'log-ratio-origin' ? Math.log : (x: number) => x;
  if (p.model === 'log-ratio-origin' && (p.limit <= 0 || p.changes.some((r) => !(r > 0)))) {
    throw new RangeError('log-ratio model needs positive ratios and limit');
  }
  const ys = p.changes.map(transform);
  const stt = sum(p.hours.map((t) => t * t));
  if (stt === 0) throw new RangeError('need at least one read point after time zero');
  const slope = sum(p.hours.map((t, i) => t * ys[i])) / stt;
  const target = transform(p.limit);
  const hours = slope !== 0 && target / slope > 0 ? target / slope : null;
  return { hours, slope, model: p.model };
}

// ---------------------------------------------------------------------------------------------
// Individuals chart and Western Electric run rules
// ---------------------------------------------------------------------------------------------

/** Individuals-chart factor 3/d2 with d2 = 1.128 for moving ranges of two (Montgomery). */
export const E2 = 2.66;
export const D2_N2 = 1.128;

export interface IndividualsChart {
  mean: number;
  mrBar: number;
  ucl: number;
  lcl: number;
  /** Process sigma estimated as MR̄ / d2. */
  sigma: number;
}

/** Shewhart individuals chart: limits mean ± 2.66·MR̄ (Montgomery). Needs ≥ 2 values. */
export function individualsChart(values: number[]): IndividualsChart {
  if (values.length < 2) throw new RangeError('an individuals chart needs at least two values');
  const ranges = values.slice(1).map((v, i) => Math.abs(v - values[i]));
  const m = mean(values);
  const mrBar = mean(ranges);
  return { mean: m, mrBar, ucl: m + E2 * mrBar, lcl: m - E2 * mrBar, sigma: mrBar / D2_N2 };
}

export interface RunRuleViolation {
  /** Western Electric rule: 1 beyond 3σ; 2 two of three beyond 2σ; 3 four of five beyond 1σ; 4 eight in a row one side. */
  rule: 1 | 2 | 3 | 4;
  /** Index of the point that completes the pattern. */
  index: number;
  /** Indices of the points that make the pattern. */
  indices: number[];
  side: 'above' | 'below';
  description: string;
}

/**
 * The four Western Electric run rules (Statistical Quality Control Handbook, 1956). A violation
 * is reported at each point that completes a pattern, with that point part of it (for rules 2
 * and 3 the completing point is itself beyond the zone). Overlapping windows report again.
 */
export function runRuleViolations(values: number[], p: { mean: number; sigma: number }): RunRuleViolation[] {
  const out: RunRuleViolation[] = [];
  const z = values.map((v) => (v - p.mean) / p.sigma);
  const sides: ('above' | 'below')[] = ['above', 'below'];
  const beyond = (i: number, k: number, side: 'above' | 'below') => (side === 'above' ? z[i] > k : z[i] < -k);

  z.forEach((_, i) => {
    for (const side of sides) {
      if (beyond(i, 3, side)) {
        out.push({ rule: 1, index: i, indices: [i], side, description: `point ${i + 1} beyond 3σ ${side} the centre line` });
      }
      const windowRule = (rule: 2 | 3, size: number, need: number, k: number) => {
        if (i < size - 1 || !beyond(i, k, side)) return;
        const idx: number[] = [];
        for (let j = i - size + 1; j <= i; j++) if (beyond(j, k, side)) idx.push(j);
        if (idx.length >= need) {
          out.push({
            rule,
            index: i,
            indices: idx,
            side,
            description: `${need} of ${size} points beyond ${k}σ ${side} the centre line (points ${idx.map((x) => x + 1).join(', ')})`,
          });
        }
      };
      windowRule(2, 3, 2, 2);
      windowRule(3, 5, 4, 1);
      if (i >= 7) {
        const idx = Array.from({ length: 8 }, (_, k) => i - 7 + k);
        if (idx.every((j) => beyond(j, 0, side))) {
          out.push({ rule: 4, index: i, indices: idx, side, description: `8 points in a row ${side} the centre line` });
        }
      }
    }
  });
  return out.sort((a, b) => a.index - b.index || a.rule - b.rule);
}

// ---------------------------------------------------------------------------------------------
// Welch t-test from summary statistics
// ---------------------------------------------------------------------------------------------

export interface SampleSummary {
  n: number;
  mean: number;
  sd: number;
}

/**
 * Welch's t for two samples with unequal variances (NIST e-Handbook §1.3.5.3):
 * t = (m1 − m2)/√(s1²/n1 + s2²/n2), Welch–Satterthwaite degrees of freedom, two-sided p from jstat.
 */
export function welchT(a: SampleSummary, b: SampleSummary): { t: number; df: number; pTwoSided: number } {
  if (a.n < 2 || b.n < 2) throw new RangeError('each sample needs at least two values');
  const va = (a.sd * a.sd) / a.n;
  const vb = (b.sd * b.sd) / b.n;
  const se2 = va + vb;
  if (!(se2 > 0)) throw new RangeError('both samples have zero spread');
  const t = (a.mean - b.mean) / Math.sqrt(se2);
  const df = (se2 * se2) / ((va * va) / (a.n - 1) + (vb * vb) / (b.n - 1));
  const pTwoSided = 2 * jStat.studentt.cdf(-Math.abs(t), df);
  return { t, df, pTwoSided };
}

// ---------------------------------------------------------------------------------------------
// Prediction interval for one new value
// ---------------------------------------------------------------------------------------------

/**
 * Two-sided prediction interval for one new value from m past values of a normal population
 * (Hahn & Meeker, Statistical Intervals, 1991, normal-distribution chapter):
 *   x̄ ± t(1 − α/2; m − 1) · s · √(1 + 1/m),  α = 1 − confidence, s the sample standard deviation.
 * Needs at least two values.
 */
export function predictionInterval(p: { values: number[]; confidence: number }): {
  lower: number;
  upper: number;
  mean: number;
  sd: number;
  t: number;
  m: number;
} {
  const m = p.values.length;
  if (m < 2) throw new RangeError('a prediction interval needs at least two values');
  if (!(p.confidence > 0 && p.confidence < 1)) throw new RangeError('confidence must be between 0 and 1');
  if (p.values.some((v) => !Number.isFinite(v))) throw new RangeError('values must be finite');
  const xbar = mean(p.values);
  const sd = sampleStandardDeviation(p.values);
  const t = jStat.studentt.inv(1 - (1 - p.confidence) / 2, m - 1);
  const half = t * sd * Math.sqrt(1 + 1 / m);
  return { lower: xbar - half, upper: xbar + half, mean: xbar, sd, t, m };
}
