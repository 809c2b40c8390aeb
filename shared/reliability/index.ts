/**
 * Acceleration, failure-rate bounds, LTPD sampling and Weibull life analysis.
 * Pure functions, no I/O; distributions come from jstat, regression from simple-statistics.
 *
 * Results that depend on physical constants can report them: `constantsUsed()` gives the set,
 * and the `…Details` variants return it with the result so stored results carry it.
 */
import { jStat } from 'jstat';
import { linearRegression } from 'simple-statistics';

/** Boltzmann constant in eV/K (CODATA 2018, exact by the 2019 SI definition). */
export const BOLTZMANN_EV_PER_K = 8.617333262e-5;
/** °C → K offset. */
export const KELVIN_OFFSET_K = 273.15;

export interface ReliabilityConstants {
  boltzmannEvPerK: number;
  kelvinOffset: number;
  boltzmannSource: string;
}

/** The constants every acceleration / FIT result here was computed with. */
export function constantsUsed(): ReliabilityConstants {
  return { boltzmannEvPerK: BOLTZMANN_EV_PER_K, kelvinOffset: KELVIN_OFFSET_K, boltzmannSource: 'CODATA 2018' };
}

// ---------------------------------------------------------------------------------------------
// Acceleration factors
// ---------------------------------------------------------------------------------------------

/** Arrhenius AF = exp[(Ea/k)(1/T_use − 1/T_stress)], kelvin (JEDEC JEP122 / JESD85). */
export function arrheniusFactor(p: { eaEv: number; useC: number; stressC: number }): number {
  const tu = p.useC + KELVIN_OFFSET_K;
  const ts = p.stressC + KELVIN_OFFSET_K;
  return Math.exp((p.eaEv / BOLTZMANN_EV_PER_K) * (1 / tu - 1 / ts));
}

export function arrheniusDetails(p: { eaEv: number; useC: number; stressC: number }) {
  return { accelerationFactor: arrheniusFactor(p), inputs: { ...p }, constants: constantsUsed() };
}

/**
 * Peck humidity model: AF = (RH_stress/RH_use)^n · Arrhenius(Ea).
 * Defaults n = 2.66, Ea = 0.79 eV are recalled values, not checked against a text.
 */
export function peckFactor(p: { rhUsePct: number; rhStressPct: number; useC: number; stressC: number; n?: number; eaEv?: number }): number {
  const n = p.n ?? 2.66;
  const eaEv = p.eaEv ?? 0.79;
  return Math.pow(p.rhStressPct / p.rhUsePct, n) * arrheniusFactor({ eaEv, useC: p.useC, stressC: p.stressC });
}

/** Coffin–Manson for temperature cycling: AF = (ΔT_test/ΔT_use)^m (NIST e-Handbook §8.1.5). */
export function coffinMansonFactor(p: { deltaTTestC: number; deltaTUseC: number; m: number }): number {
  return Math.pow(p.deltaTTestC / p.deltaTUseC, p.m);
}

// ---------------------------------------------------------------------------------------------
// Equivalent stress time from a measured temperature history
// ---------------------------------------------------------------------------------------------

/**
 * A stretch of credited stress time at one (estimated) junction temperature, and for humidity
 * stress the chamber's relative humidity over it.
 */
export interface StressSegment {
  hours: number;
  tjC: number;
  /** Relative humidity (%) over the stretch; null or absent without humidity control. */
  rhPct?: number | null;
}

function checkSegment(s: StressSegment): void {
  if (!(s.hours >= 0) || !Number.isFinite(s.hours)) throw new RangeError('segment hours must be finite and ≥ 0');
  if (!Number.isFinite(s.tjC) || s.tjC <= -KELVIN_OFFSET_K)
    throw new RangeError('segment junction temperature must be finite and above absolute zero');
}

/**
 * Hours at the use temperature equivalent to a temperature history: t_eq = Σ hours · AF(tjC), the
 * integral of the Arrhenius factor over the credited time (JEDEC JEP122; equivalent time is common
 * practice). The history is each device's estimated junction, not a plan's prediction.
 */
export function equivalentStressHours(p: { segments: readonly StressSegment[]; eaEv: number; useC: number }): number {
  let sum = 0;
  for (const s of p.segments) {
    checkSegment(s);
    if (s.hours > 0) sum += s.hours * arrheniusFactor({ eaEv: p.eaEv, useC: p.useC, stressC: s.tjC });
  }
  return sum;
}

/**
 * Humidity: Σ hours · Peck AF at each stretch's junction temperature and humidity,
 * AF = (RH_s/RH_u)^n · exp[(Ea/k)(1/T_u − 1/T_s)] (Peck; JEDEC JEP122). A stretch without a
 * humidity reading earns nothing (its humidity is unknown).
 */
export function equivalentHumidityHours(p: {
  segments: readonly StressSegment[];
  eaEv: number;
  n: number;
  useC: number;
  rhUsePct: number;
}): number {
  if (!(p.rhUsePct > 0 && p.rhUsePct <= 100)) throw new RangeError('use humidity must be between 0 and 100 %');
  let sum = 0;
  for (const s of p.segments) {
    checkSegment(s);
    if (!(s.hours > 0) || s.rhPct == null || !(s.rhPct > 0)) continue;
    sum += s.hours * peckFactor({ rhUsePct: p.rhUsePct, rhStressPct: s.rhPct, useC: p.useC, stressC: s.tjC, n: p.n, eaEv: p.eaEv });
  }
  return sum;
}

/** Junction temperatures within this many kelvin (and humidity within 1 % RH) share a stored segment. */
export const SEGMENT_BIN_K = 0.5;

/**
 * Adds a stretch to a device's segment list in place, merging it into the stretch of the same
 * temperature bin (SEGMENT_BIN_K) and humidity (1 % RH): the stored temperature and humidity are
 * the hour-weighted means of what was merged, so a list stays short (a few dozen entries for a
 * whole run) while the sum of hours is exact and the Arrhenius sum is off by far less than the
 * bin (second order in the spread within a bin).
 */
export function addStressSegment(segments: StressSegment[], s: StressSegment): void {
  if (!(s.hours > 0) || !Number.isFinite(s.tjC)) return;
  const rh = s.rhPct ?? null;
  const key = Math.round(s.tjC / SEGMENT_BIN_K);
  const rhKey = rh === null ? null : Math.round(rh);
  const at = segments.find(
    (x) =>
      Math.round(x.tjC / SEGMENT_BIN_K) === key && (x.rhPct == null ? rhKey === null : rhKey !== null && Math.round(x.rhPct) === rhKey),
  );
  if (!at) {
    segments.push(rh === null ? { hours: s.hours, tjC: s.tjC } : { hours: s.hours, tjC: s.tjC, rhPct: rh });
    return;
  }
  const hours = at.hours + s.hours;
  at.tjC = (at.tjC * at.hours + s.tjC * s.hours) / hours;
  if (rh !== null && at.rhPct != null) at.rhPct = (at.rhPct * at.hours + rh * s.hours) / hours;
  at.hours = hours;
}

// ---------------------------------------------------------------------------------------------
// Failure rate
// ---------------------------------------------------------------------------------------------

/** χ² quantile: the value below which a fraction p of the distribution with `dof` degrees lies (jstat). */
export function chiSquareQuantile(p: number, dof: number): number {
  return jStat.chisquare.inv(p, dof);
}

export interface FitInput {
  failures: number;
  devices: number;
  hoursEach: number;
  accelerationFactor: number;
  /** Confidence level as a fraction, e.g. 0.6 or 0.9. */
  confidence: number;
}

/**
 * Upper bound of the failure rate in FIT (failures per 10⁹ device-hours) at the given confidence,
 * chi-square method (JESD85): λ = χ²(CL; 2r+2) / (2·N·H·AF) × 10⁹.
 */
export function fitUpperBound(p: FitInput): number {
  return fitUpperBoundDetails(p).fit;
}

export function fitUpperBoundDetails(p: FitInput) {
  if (!(p.confidence > 0 && p.confidence < 1)) throw new RangeError('confidence must be between 0 and 1');
  if (!(p.devices > 0 && p.hoursEach > 0 && p.accelerationFactor > 0)) {
    throw new RangeError('devices, hours and acceleration factor must be positive');
  }
  if (!Number.isInteger(p.failures) || p.failures < 0) throw new RangeError('failures must be a whole number ≥ 0');
  const dof = 2 * p.failures + 2;
  const chiSquare = chiSquareQuantile(p.confidence, dof);
  const equivalentDeviceHours = p.devices * p.hoursEach * p.accelerationFactor;
  return {
    fit: (chiSquare / (2 * equivalentDeviceHours)) * 1e9,
    chiSquare,
    dof,
    equivalentDeviceHours,
    inputs: { ...p },
    method: 'chi-square upper bound (JESD85)',
    constants: constantsUsed(),
  };
}

// ---------------------------------------------------------------------------------------------
// LTPD sampling
// ---------------------------------------------------------------------------------------------

function binomialCdf(c: number, n: number, p: number): number {
  return jStat.binomial.cdf(c, n, p);
}

/**
 * Smallest sample size n such that a lot with defect fraction `ltpd` passes (≤ acceptNumber
 * failures) with probability at most 1 − confidence: BinomCDF(c; n, LTPD) ≤ 1 − CL (exact binomial).
 * Published tables round some entries by the Poisson approximation (e.g. 116 for 2 %, 231 for 1 %).
 */
export function sampleSizeForLtpd(p: { ltpd: number; confidence: number; acceptNumber: number }): number {
  if (!(p.ltpd > 0 && p.ltpd < 1)) throw new RangeError('LTPD must be a fraction between 0 and 1');
  if (!(p.confidence > 0 && p.confidence < 1)) throw new RangeError('confidence must be between 0 and 1');
  if (!Number.isInteger(p.acceptNumber) || p.acceptNumber < 0) throw new RangeError('accept number must be ≥ 0');
  const alpha = 1 - p.confidence;
  for (let n = p.acceptNumber + 1; n < 1_000_000; n++) {
    if (binomialCdf(p.acceptNumber, n, p.ltpd) <= alpha) return n;
  }
  throw new RangeError('sample size above 1,000,000');
}

/**
 * LTPD demonstrated by a plan of n devices accepting c failures at the given confidence:
 * the defect fraction p with BinomCDF(c; n, p) = 1 − CL, i.e. the one-sided Clopper–Pearson
 * upper bound p = BetaInv(CL; c + 1, n − c) (jstat).
 */
export function ltpdDemonstrated(p: { n: number; acceptNumber: number; confidence: number }): number {
  return demonstratedLtpd({ sampleSize: p.n, acceptNumber: p.acceptNumber, confidence: p.confidence });
}

/**
 * The LTPD (fraction) a sample of `sampleSize` devices with at most `acceptNumber` failures
 * demonstrates at `confidence`, exact binomial: p_U = BetaInv(CL; c + 1, n − c), the p at which
 * BinomCDF(c; n, p) = 1 − CL (one-sided Clopper–Pearson bound). 77 devices, c 0, 90 % → 2.95 %;
 * 64 devices → 3.53 %.
 */
export function demonstratedLtpd(p: { sampleSize: number; acceptNumber: number; confidence: number }): number {
  if (!Number.isInteger(p.sampleSize) || p.sampleSize < 1) throw new RangeError('sample size must be a whole number ≥ 1');
  if (!Number.isInteger(p.acceptNumber) || p.acceptNumber < 0 || p.acceptNumber >= p.sampleSize) {
    throw new RangeError('accept number must be a whole number below the sample size');
  }
  if (!(p.confidence > 0 && p.confidence < 1)) throw new RangeError('confidence must be between 0 and 1');
  return jStat.beta.inv(p.confidence, p.acceptNumber + 1, p.sampleSize - p.acceptNumber);
}

// ---------------------------------------------------------------------------------------------
// Weibull
// ---------------------------------------------------------------------------------------------

export interface WeibullParams {
  /** Shape β. */
  beta: number;
  /** Scale η (same unit as the times, usually hours). */
  eta: number;
}

/** R(t) = exp[−(t/η)^β] (NIST e-Handbook §8.1.6.2). */
export function weibullReliability(t: number, w: WeibullParams): number {
  return Math.exp(-Math.pow(t / w.eta, w.beta));
}

/** B-life: time by which a fraction `fractionFailed` (0.1 for B10) has failed: η·(−ln(1 − F))^(1/β). */
export function weibullBLife(fractionFailed: number, w: WeibullParams): number {
  if (!(fractionFailed > 0 && fractionFailed < 1)) throw new RangeError('fraction failed must be between 0 and 1');
  return w.eta * Math.pow(-Math.log(1 - fractionFailed), 1 / w.beta);
}

/** Mean life η·Γ(1 + 1/β) (gamma function from jstat). */
export function weibullMean(w: WeibullParams): number {
  return w.eta * jStat.gammafn(1 + 1 / w.beta);
}

/** Benard's approximation of the median rank: F ≈ (i − 0.3)/(n + 0.4). */
export function benardMedianRank(rank: number, n: number): number {
  return (rank - 0.3) / (n + 0.4);
}

/**
 * Johnson's adjusted ranks for failures among suspensions. Items are ordered by time (a failure
 * before a suspension at the same time); for each failure, with reverse rank r (n for the first
 * item, 1 for the last): adjusted = previous + (n + 1 − previous)/(r + 1).
 * Returns the failure times with their (possibly fractional) ranks.
 */
export function johnsonAdjustedRanks(times: number[], suspensions: number[] = []): { time: number; rank: number }[] {
  const items = [...times.map((t) => ({ t, failed: true })), ...suspensions.map((t) => ({ t, failed: false }))].sort(
    (a, b) => a.t - b.t || Number(b.failed) - Number(a.failed),
  );
  const n = items.length;
  let previous = 0;
  const out: { time: number; rank: number }[] = [];
  items.forEach((item, i) => {
    if (!item.failed) return;
    const reverseRank = n - i;
    previous = previous + (n + 1 - previous) / (reverseRank + 1);
    out.push({ time: item.t, rank: previous });
  });
  return out;
}

export interface WeibullFit extends WeibullParams {
  method: string;
  failures: number;
  suspensions: number;
}

/**
 * Two-parameter Weibull by median-rank regression: median ranks by Benard's approximation,
 * with Johnson's adjusted ranks when suspensions (survivors / removed units) are given;
 * least squares of ln t on ln(−ln(1 − F)) ("X on Y", the usual choice for life data),
 * so ln t = ln η + (1/β)·y. Needs at least two distinct failure times.
 */
export function weibullFit(times: number[], suspensions: number[] = [], options: { method?: 'rank-regression' | 'mle' } = {}): WeibullFit {
  if (times.length < 2) throw new RangeError('Weibull fit needs at least two failures');
  if ([...times, ...suspensions].some((t) => !(t > 0) || !Number.isFinite(t))) {
    throw new RangeError('times must be positive and finite');
  }
  if (options.method === 'mle') return weibullMle(times, suspensions);
  const n = times.length + suspensions.length;
  const ranked = johnsonAdjustedRanks(times, suspensions);
  const points = ranked.map(({ time, rank }) => {
    const f = benardMedianRank(rank, n);
    return [Math.log(-Math.log(1 - f)), Math.log(time)];
  });
  const { m, b } = linearRegression(points);
  if (!(m > 0) || !Number.isFinite(m)) throw new RangeError('failure times do not spread: Weibull fit undefined');
  return {
    beta: 1 / m,
    eta: Math.exp(b),
    method:
      suspensions.length > 0
        ? "median-rank regression (Benard's approximation, Johnson's adjusted ranks), ln t on ln(−ln(1−F))"
        : "median-rank regression (Benard's approximation), ln t on ln(−ln(1−F))",
    failures: times.length,
    suspensions: suspensions.length,
  };
}

/**
 * Two-parameter Weibull by maximum likelihood with right-censored suspensions (NIST e-Handbook
 * §8.4.1.2 / Nelson, Applied Life Data Analysis, ch. 8 — from memory). With r failures t_i and all
 * n times x_j (failures and suspensions), β solves
 *   Σ x_j^β ln x_j / Σ x_j^β − 1/β − (1/r) Σ ln t_i = 0   (increasing in β)
 * and η = (Σ x_j^β / r)^(1/β). Times are scaled by their largest value first so x^β stays finite.
 */
function weibullMle(times: number[], suspensions: number[]): WeibullFit {
  const all = [...times, ...suspensions];
  const scale = Math.max(...all);
  const x = all.map((t) => t / scale);
  const lx = x.map(Math.log);
  const r = times.length;
  const meanLnFail = times.reduce((s, t) => s + Math.log(t / scale), 0) / r;
  if (times.every((t) => t === times[0]) && suspensions.every((t) => t <= times[0])) {
    throw new RangeError('failure times do not spread: Weibull fit undefined');
  }
  const g = (beta: number) => {
    let s0 = 0;
    let s1 = 0;
    for (let j = 0; j < x.length; j++) {
      const w = Math.pow(x[j], beta);
      s0 += w;
      s1 += w * lx[j];
    }
    return s1 / s0 - 1 / beta - meanLnFail;
  };
  let lo = 1e-3;
  let hi = 1;
  while (g(hi) < 0) {
    hi *= 2;
    if (hi > 1e4) throw new RangeError('failure times do not spread: Weibull fit undefined');
  }
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = (lo + hi) / 2;
    if (g(mid) < 0) lo = mid;
    else hi = mid;
  }
  const beta = (lo + hi) / 2;
  const sumW = x.reduce((s, v) => s + Math.pow(v, beta), 0);
  const eta = scale * Math.pow(sumW / r, 1 / beta);
  return {
    beta,
    eta,
    method: suspensions.length > 0 ? 'maximum likelihood with right-censored suspensions' : 'maximum likelihood',
    failures: r,
    suspensions: suspensions.length,
  };
}
