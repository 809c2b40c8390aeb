/**
 * A socket's case-to-ambient thermal path from its own telemetry: the first-order model
 *
 *   τ·dTc/dt = Ta + c + θ·P − Tc      (step response ΔT(t) = θ·ΔP·(1 − e^{−t/τ}))
 *
 * with Tc the case, Ta the chamber (ambient drift is followed sample by sample), c the socket's
 * offset from the chamber (its spot in the oven), θ (K/W) and τ (s) to identify. Pure, no I/O.
 *
 * Methods:
 * - `identifySocketThermal`: linear least squares on the discrete-time ARX form of the model
 *   (Ljung, System Identification: Theory for the User, ARX models — from memory). With the rise
 *   y = Tc − Ta − c sampled every h seconds and the power held over each interval,
 *   y(k+1) = a·y(k) + b·P̄(k), a = e^{−h/τ}, b = (1 − a)·θ, so θ = b/(1 − a), τ = −h/ln a.
 *   Any power history works (a bias-on heat-up, a bias step, the slow drift of the device's own
 *   power). The offset c is given (read while bias was off, or 0 when the chamber is taken as the
 *   socket's ambient) or fitted as a third coefficient when the window holds two power levels.
 *   Without a visible transient only θ is identifiable: θ = Σ y·P / Σ P² (steady state).
 * - `fitStepResponse`: one step, any (e.g. log-spaced) times: separable least squares (variable
 *   projection, Golub & Pereyra 1973 — from memory): for each τ the amplitude (and offset) are linear,
 *   so the residual is minimised over log τ alone (grid, then golden section).
 * - `zthFoster`: the Foster network's response Zth(t) = Σ Ri(1 − e^{−t/τi}) (JESD51-14, REFERENCE A7).
 * Quality: R² and RMS of the *simulated* response (output error), not of the one-step prediction.
 */
import {
  GOOD_FIT_MAX_RMS_FRACTION,
  GOOD_FIT_MAX_RMS_K,
  GOOD_FIT_MIN_R2,
  MIN_IDENTIFY_POWER_W,
  MIN_IDENTIFY_RISE_K,
  MIN_IDENTIFY_SAMPLES,
} from './rules';

export interface FosterTerm {
  rCPerW: number;
  tauS: number;
}

/** Zth(t) = Σ Ri(1 − e^{−t/τi}). */
export function zthFoster(terms: readonly FosterTerm[], tS: number): number {
  let z = 0;
  for (const t of terms) z += t.rCPerW * (1 - Math.exp(-tS / t.tauS));
  return z;
}

/** Solves the normal equations of a small least-squares problem (rows of x, targets y); null when singular. */
export function leastSquares(x: readonly (readonly number[])[], y: readonly number[]): number[] | null {
  const p = x[0]?.length ?? 0;
  if (p === 0 || x.length < p) return null;
  const a = Array.from({ length: p }, () => new Array<number>(p + 1).fill(0));
  for (let r = 0; r < x.length; r++) {
    const row = x[r];
    for (let i = 0; i < p; i++) {
      for (let j = 0; j < p; j++) a[i][j] += row[i] * row[j];
      a[i][p] += row[i] * y[r];
    }
  }
  // Gaussian elimination with partial pivoting; a pivot below 1e-12 of the diagonal's scale is singular.
  const scale = Math.max(...a.map((row, i) => Math.abs(row[i])), 1e-300);
  for (let c = 0; c < p; c++) {
    let best = c;
    for (let r = c + 1; r < p; r++) if (Math.abs(a[r][c]) > Math.abs(a[best][c])) best = r;
    if (Math.abs(a[best][c]) < 1e-12 * scale) return null;
    [a[c], a[best]] = [a[best], a[c]];
    for (let r = 0; r < p; r++) {
      if (r === c) continue;
      const f = a[r][c] / a[c][c];
      for (let k = c; k <= p; k++) a[r][k] -= f * a[c][k];
    }
  }
  return a.map((row, i) => row[p] / row[i]);
}

// ---------------------------------------------------------------------------------------------
// One step, any times: variable projection over log τ

export interface StepFit {
  /** Amplitude: θ·ΔP (K), or θ (K/W) when the data are already divided by ΔP. */
  amplitude: number;
  tauS: number;
  /** Level before the step (when fitted; else 0). */
  offset: number;
  rms: number;
  r2: number;
}

/**
 * Fits y(t) = offset + A·(1 − e^{−t/τ}) to a step's samples (t from the step). `fitOffset` false
 * pins the offset at 0. τ is searched in [tauMinS, tauMaxS] (default: the data's shortest positive
 * t / 10 to its longest × 10).
 */
export function fitStepResponse(
  tS: readonly number[],
  y: readonly number[],
  opts: { fitOffset?: boolean; tauMinS?: number; tauMaxS?: number } = {},
): StepFit | null {
  const n = Math.min(tS.length, y.length);
  const fitOffset = opts.fitOffset ?? false;
  if (n < (fitOffset ? 4 : 3)) return null;
  const pos = tS.filter((t) => t > 0);
  if (pos.length === 0) return null;
  const lo = Math.log(opts.tauMinS ?? Math.min(...pos) / 10);
  const hi = Math.log(opts.tauMaxS ?? Math.max(...pos) * 10);
  const solve = (logTau: number): { sse: number; coef: number[] } | null => {
    const tau = Math.exp(logTau);
    const rows = tS.slice(0, n).map((t) => (fitOffset ? [1 - Math.exp(-t / tau), 1] : [1 - Math.exp(-t / tau)]));
    const coef = leastSquares(rows, y.slice(0, n));
    if (!coef) return null;
    let sse = 0;
    for (let k = 0; k < n; k++) {
      const e = y[k] - rows[k].reduce((s, v, i) => s + v * coef[i], 0);
      sse += e * e;
    }
    return { sse, coef };
  };
  const sseAt = (lt: number) => solve(lt)?.sse ?? Infinity;
  // Coarse grid on log τ, then golden section around the best grid point.
  const grid = 60;
  let best = lo;
  let bestSse = Infinity;
  for (let g = 0; g <= grid; g++) {
    const lt = lo + ((hi - lo) * g) / grid;
    const s = sseAt(lt);
    if (s < bestSse) [best, bestSse] = [lt, s];
  }
  const step = (hi - lo) / grid;
  let a = Math.max(lo, best - step);
  let b = Math.min(hi, best + step);
  const phi = (Math.sqrt(5) - 1) / 2;
  let c = b - phi * (b - a);
  let d = a + phi * (b - a);
  let fc = sseAt(c);
  let fd = sseAt(d);
  for (let it = 0; it < 200 && b - a > 1e-10; it++) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - phi * (b - a);
      fc = sseAt(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + phi * (b - a);
      fd = sseAt(d);
    }
  }
  const lt = (a + b) / 2;
  const sol = solve(lt);
  if (!sol) return null;
  const mean = y.slice(0, n).reduce((s, v) => s + v, 0) / n;
  const sst = y.slice(0, n).reduce((s, v) => s + (v - mean) ** 2, 0);
  return {
    amplitude: sol.coef[0],
    tauS: Math.exp(lt),
    offset: fitOffset ? sol.coef[1] : 0,
    rms: Math.sqrt(sol.sse / n),
    r2: sst > 0 ? 1 - sol.sse / sst : 0,
  };
}

// ---------------------------------------------------------------------------------------------
// A socket's telemetry: ARX least squares

/** One telemetry sample of one socket: stress-clock time (s), case and chamber (°C), dissipation (W). */
export interface ThermalSample {
  tS: number;
  caseC: number;
  ambientC: number;
  powerW: number;
}

export interface ThermalIdentification {
  /** False: not identifiable from this window (`reason` says why); every number below is then null. */
  identifiable: boolean;
  reason: string | null;
  thetaCPerW: number | null;
  /** Null when the window shows no transient or τ is shorter than the sample interval (`tauNote`). */
  tauS: number | null;
  tauNote: string | null;
  /** The socket's offset from the chamber (°C) and where it came from. */
  offsetC: number | null;
  offsetSource: 'given' | 'fitted';
  method: 'arx' | 'steady' | null;
  /** R² of the simulated response (only with a transient in the window) and its RMS residual (K). */
  r2: number | null;
  rmsC: number | null;
  samples: number;
  sampleIntervalS: number | null;
  meanPowerW: number;
  meanRiseK: number;
  /** The steady fit's trend term (K per stress hour), when it was used. */
  driftKPerH: number | null;
  /** Meets the good-fit rule of rules.ts: may be used by the flag and by protection. */
  good: boolean;
}

export interface IdentifyOptions {
  /** The socket's offset from the chamber (°C); null/absent = fit it (needs two power levels). */
  offsetC?: number | null;
  minSamples?: number;
  minPowerW?: number;
  minRiseK?: number;
  /**
   * Steady windows may carry a linear trend (a slowly drying pad, ambient drift the chamber reading
   * does not follow): θ is then the window's centre value. Off by default; the tracker uses it for
   * its periodic windows, never for a step's.
   */
  driftTerm?: boolean;
}

const mean = (xs: readonly number[]) => (xs.length ? xs.reduce((s, v) => s + v, 0) / xs.length : NaN);

function notIdentifiable(reason: string, base: Partial<ThermalIdentification>, offsetSource: 'given' | 'fitted'): ThermalIdentification {
  return {
    identifiable: false,
    reason,
    thetaCPerW: null,
    tauS: null,
    tauNote: null,
    offsetC: null,
    offsetSource,
    method: null,
    r2: null,
    rmsC: null,
    samples: base.samples ?? 0,
    sampleIntervalS: base.sampleIntervalS ?? null,
    meanPowerW: base.meanPowerW ?? 0,
    meanRiseK: base.meanRiseK ?? 0,
    driftKPerH: null,
    good: false,
  };
}

/** Median of positive sample intervals. */
function medianInterval(samples: readonly ThermalSample[]): number {
  const d: number[] = [];
  for (let k = 1; k < samples.length; k++) {
    const h = samples[k].tS - samples[k - 1].tS;
    if (h > 0) d.push(h);
  }
  d.sort((x, y) => x - y);
  return d.length ? d[Math.floor(d.length / 2)] : NaN;
}

/** Output-error quality: simulate y from its first value through the fitted model. */
function simulatedQuality(y: readonly number[], pAvg: readonly number[], a: number, b: number): { r2: number; rms: number } {
  let yh = y[0];
  let sse = 0;
  const m = mean(y);
  let sst = 0;
  for (let k = 0; k < y.length; k++) {
    if (k > 0) yh = a * yh + b * pAvg[k - 1];
    sse += (y[k] - yh) ** 2;
    sst += (y[k] - m) ** 2;
  }
  return { r2: sst > 0 ? 1 - sse / sst : 0, rms: Math.sqrt(sse / y.length) };
}

function isGood(rms: number, meanRise: number, r2: number | null): boolean {
  const rmsOk = rms <= Math.max(GOOD_FIT_MAX_RMS_K, GOOD_FIT_MAX_RMS_FRACTION * Math.abs(meanRise));
  return rmsOk && (r2 === null || r2 >= GOOD_FIT_MIN_R2);
}

/**
 * Identifies θ and τ of a socket's case-to-ambient path from a window of its samples (stress-clock
 * order, bias on throughout or switched once). Samples at an interval more than 20 % off the
 * window's median interval break the chain (a gap): pairs across it are left out.
 */
export function identifySocketThermal(samples: readonly ThermalSample[], opts: IdentifyOptions = {}): ThermalIdentification {
  const given = opts.offsetC !== undefined && opts.offsetC !== null && Number.isFinite(opts.offsetC);
  const offsetSource = given ? 'given' : 'fitted';
  const minSamples = opts.minSamples ?? MIN_IDENTIFY_SAMPLES;
  const ok = samples.filter((s) => [s.tS, s.caseC, s.ambientC, s.powerW].every(Number.isFinite));
  const h = medianInterval(ok);
  const riseAll = ok.map((s) => s.caseC - s.ambientC - (given ? (opts.offsetC as number) : 0));
  const base = {
    samples: ok.length,
    sampleIntervalS: Number.isFinite(h) ? h : null,
    meanPowerW: mean(ok.map((s) => s.powerW)),
    meanRiseK: mean(riseAll),
  };
  if (ok.length < minSamples) return notIdentifiable(`${ok.length} samples; at least ${minSamples} are needed`, base, offsetSource);
  if (!(base.meanPowerW >= (opts.minPowerW ?? MIN_IDENTIFY_POWER_W))) {
    return notIdentifiable(`socket power ${base.meanPowerW.toPrecision(2)} W is too small to heat the case measurably`, base, offsetSource);
  }
  // Pairs (k, k+1) at the usual interval.
  const rows: number[][] = [];
  const target: number[] = [];
  const pairs: Array<[number, number]> = [];
  for (let k = 0; k + 1 < ok.length; k++) {
    const dt = ok[k + 1].tS - ok[k].tS;
    if (Math.abs(dt - h) > 0.2 * h) continue;
    const pAvg = (ok[k].powerW + ok[k + 1].powerW) / 2;
    rows.push(given ? [riseAll[k], pAvg] : [riseAll[k], pAvg, 1]);
    target.push(riseAll[k + 1]);
    pairs.push([k, k + 1]);
  }
  if (rows.length < minSamples - 1)
    return notIdentifiable(`only ${rows.length} evenly spaced sample pairs (gaps in the telemetry)`, base, offsetSource);
  const powers = ok.map((s) => s.powerW);
  const pSpan = Math.max(...powers) - Math.min(...powers);
  const twoLevels = pSpan >= 0.2 * base.meanPowerW;
  if (!given && !twoLevels) {
    return notIdentifiable(
      'one power level in the window: the socket’s offset from the chamber and θ cannot be told apart (a bias step or a reading with bias off is needed)',
      base,
      offsetSource,
    );
  }
  const coef = leastSquares(rows, target);
  const ySpan = Math.max(...riseAll) - Math.min(...riseAll);
  const a = coef?.[0] ?? NaN;
  const b = coef?.[1] ?? NaN;
  const c = given ? 0 : (coef?.[2] ?? NaN);
  const h4 = Math.exp(-4); // τ below h/4: the case settles within one interval
  // A transient must stand out of sensor noise (σ 0.2–0.3 K spans about 1 K over 20 samples).
  const transient = coef !== null && ySpan >= Math.max(MIN_TRANSIENT_SPAN_K, 0.1 * Math.abs(base.meanRiseK)) && a > h4 && a < 1;
  const offsetC = given ? (opts.offsetC as number) : c / (1 - a);
  const windowS = ok[ok.length - 1].tS - ok[0].tS;
  const tauFit = transient ? -h / Math.log(a) : NaN;
  // A "transient" slower than half the window is a drift (a drying pad, the device's own power
  // creeping), not a step the window has seen settle: τ is not identifiable there, θ is judged
  // from the window's steady state below (its residual then says whether that holds).
  const slowDrift = transient && windowS < 2 * tauFit;
  let arxFit: ThermalIdentification | null = null;
  if (transient && !slowDrift) {
    const theta = b / (1 - a);
    const tau = tauFit;
    // Quality on the rise relative to the identified offset.
    const y = riseAll.map((r) => r - (given ? 0 : offsetC));
    const pAvg = ok.slice(1).map((s, k) => (ok[k].powerW + s.powerW) / 2);
    const q = simulatedQuality(y, pAvg, a, b);
    const meanRise = mean(y);
    if (theta > 0 && Number.isFinite(theta)) {
      arxFit = {
        identifiable: true,
        reason: null,
        thetaCPerW: theta,
        tauS: tau,
        tauNote: null,
        offsetC,
        offsetSource,
        method: 'arx',
        r2: q.r2,
        rmsC: q.rms,
        ...base,
        meanRiseK: meanRise,
        driftKPerH: null,
        good: isGood(q.rms, meanRise, q.r2),
      };
      if (arxFit.good) return arxFit;
    }
  }
  // No transient (or faster than the sample interval): the steady-state θ.
  let tauNote = 'no transient in the window: τ not identifiable';
  if (coef !== null && twoLevels && ySpan >= 0.5 && a <= h4)
    tauNote = `τ shorter than a quarter of the ${Math.round(h)} s sample interval: not resolved`;
  if (slowDrift)
    tauNote = `a drift slower than half the ${Math.round(windowS)} s window (τ fit ${Math.round(tauFit)} s): τ not identifiable here`;
  // An apparent transient slower than the window is either a slow drift (allowed only with a
  // bounded trend term) or a heat-up still under way: never judged as a steady state without one.
  const steady = steadyFit(ok, riseAll, given ? (opts.offsetC as number) : null, windowS, opts.driftTerm ?? false, slowDrift);
  if (!steady && slowDrift) {
    return notIdentifiable(
      `still settling: the case moves over the whole ${Math.round(windowS)} s window (time constant about ${Math.round(tauFit)} s)`,
      base,
      offsetSource,
    );
  }
  if (!steady) return arxFit ?? notIdentifiable('the power did not change enough to fit θ and the offset', base, offsetSource);
  const { theta, off, rms, meanRise, driftKPerH } = steady;
  if (!(theta > 0)) return arxFit ?? notIdentifiable('the fitted θ is not positive: the case did not follow the power', base, offsetSource);
  if (Math.abs(meanRise) < (opts.minRiseK ?? MIN_IDENTIFY_RISE_K)) {
    return notIdentifiable(
      `the case sits only ${meanRise.toFixed(2)} K above its ambient: too small against sensor noise`,
      base,
      offsetSource,
    );
  }
  const good = isGood(rms, meanRise, null);
  if (!good && arxFit) return arxFit;
  return {
    identifiable: true,
    reason: null,
    thetaCPerW: theta,
    tauS: null,
    tauNote: arxFit ? 'the window is a drift, not a first-order step: τ not identifiable here' : tauNote,
    offsetC: off,
    offsetSource,
    method: 'steady',
    r2: null,
    rmsC: rms,
    ...base,
    meanRiseK: meanRise,
    driftKPerH,
    good,
  };
}

/**
 * Largest drift the steady fit's trend term may absorb over its window, as a fraction of the mean
 * rise: more than that is a heat-up still under way, not a slow change (Emberlot's choice).
 */
export const MAX_DRIFT_FRACTION = 0.3;

/** Smallest span of the rise (K) that counts as a transient rather than sensor noise (Emberlot's choice). */
export const MIN_TRANSIENT_SPAN_K = 1;

/**
 * Steady state: rise = θ·P (+ offset when not given) (+ d·(t − t̄) when driftTerm: a slow change of
 * θ or of the socket's ambient over the window; θ is then the window's centre value). The trend is
 * kept only while its change over the window stays within MAX_DRIFT_FRACTION of the mean rise.
 */
function steadyFit(
  ok: readonly ThermalSample[],
  rise: readonly number[],
  offsetC: number | null,
  windowS: number,
  driftTerm: boolean,
  /** The window moves like a slow transient: only the bounded trend fit may answer (else null). */
  settling = false,
): { theta: number; off: number; rms: number; meanRise: number; driftKPerH: number | null } | null {
  const tBar = mean(ok.map((s) => s.tS));
  const fit = (withDrift: boolean) => {
    const rows = ok.map((s) => {
      const r = [s.powerW];
      if (offsetC === null) r.push(1);
      if (withDrift) r.push(s.tS - tBar);
      return r;
    });
    const coef = leastSquares(rows, rise);
    if (!coef) return null;
    const theta = coef[0];
    const off = offsetC ?? coef[1];
    const d = withDrift ? coef[coef.length - 1] : 0;
    let sse = 0;
    const y: number[] = [];
    for (let k = 0; k < ok.length; k++) {
      const yk = rise[k] - (offsetC === null ? off : 0);
      y.push(yk);
      sse += (yk - theta * ok[k].powerW - d * (ok[k].tS - tBar)) ** 2;
    }
    return { theta, off, rms: Math.sqrt(sse / ok.length), meanRise: mean(y), driftKPerH: withDrift ? d * 3600 : null, d };
  };
  if (driftTerm) {
    const f = fit(true);
    if (f && Math.abs(f.d) * windowS <= MAX_DRIFT_FRACTION * Math.abs(f.meanRise)) return f;
  }
  return settling ? null : fit(false);
}
