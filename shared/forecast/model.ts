/**
 * The degradation model behind the verdict forecast: random slopes through the origin.
 *
 * Each device's drift in its transformed scale — hFE % change from time zero, ln(ICBO / time zero),
 * VCE(sat) shift in mV — is y_ij = b_i·t_j + e_ij: a straight line through the origin (NIST/SEMATECH
 * e-Handbook §8.4.2.3 fits each unit's path this way), a slope b_i ~ N(μ, σ_b²) per device across
 * the lot, and measurement noise e_ij ~ N(0, σ_e²) at each read point (the random-coefficients model
 * of Lu & Meeker, Technometrics 35(2):161–174, 1993).
 *
 * The lot's μ, σ_b and σ_e come from Lu & Meeker's two-stage method (method of moments):
 *  stage 1 — each device's least-squares slope through the origin b̂_i = Σt·y / Σt² (S_i = Σt²) and
 *            its residual sum of squares;
 *  stage 2 — μ̂ = mean(b̂_i); σ̂_e² = pooled residual variance Σ RSS_i / Σ(n_i − 1); and since
 *            Var(b̂_i) = σ_b² + σ_e²/S_i, σ̂_b² = var(b̂_i) − σ̂_e²·mean(1/S_i), at least 0.
 * So noise is separated from slope spread; it needs two read points after time zero.
 *
 * Known simplifications: the parameters of one device drift independently of each other; the
 * time-zero reading's own error (shared by a device's later changes) is taken as part of the path.
 */

export interface SlopeFit {
  /** Devices with a path. */
  devices: number;
  /** Mean slope μ̂ (change per hour in the transformed scale). */
  mean: number;
  /** Slope spread σ̂_b across the devices (per hour), noise removed. */
  spread: number;
  /** Measurement noise σ̂_e (transformed scale); null when no path has two points. */
  noise: number | null;
  /** Residual degrees of freedom behind σ̂_e: Σ(n_i − 1). */
  noiseDf: number;
  /** Sample variance of the stage-1 slopes (σ_b² + σ_e²·mean(1/S)). */
  slopeVariance: number;
  /** mean(1/S_i): how much of slopeVariance is noise per unit σ_e². */
  meanInverseS: number;
}

export interface PathPoints {
  hours: number[];
  values: number[];
}

/** Stage 1: the least-squares slope through the origin, Σt² and the residual sum of squares of one path. */
export function originSlope(p: PathPoints): { slope: number; sumTT: number; rss: number; n: number } {
  let stt = 0;
  let sty = 0;
  for (let j = 0; j < p.hours.length; j++) {
    stt += p.hours[j] * p.hours[j];
    sty += p.hours[j] * p.values[j];
  }
  if (!(stt > 0)) throw new RangeError('A path needs a read point after time zero.');
  const slope = sty / stt;
  let rss = 0;
  for (let j = 0; j < p.hours.length; j++) rss += (p.values[j] - slope * p.hours[j]) ** 2;
  return { slope, sumTT: stt, rss, n: p.hours.length };
}

/** Stage 2 (Lu & Meeker 1993, two-stage method of moments): μ̂, σ̂_b, σ̂_e from the devices' paths. */
export function fitSlopes(paths: PathPoints[]): SlopeFit | null {
  const s1 = paths.filter((p) => p.hours.some((t) => t > 0)).map(originSlope);
  if (s1.length === 0) return null;
  const n = s1.length;
  const mean = s1.reduce((a, x) => a + x.slope, 0) / n;
  const slopeVariance = n > 1 ? s1.reduce((a, x) => a + (x.slope - mean) ** 2, 0) / (n - 1) : 0;
  const noiseDf = s1.reduce((a, x) => a + x.n - 1, 0);
  const noiseVar = noiseDf > 0 ? s1.reduce((a, x) => a + x.rss, 0) / noiseDf : null;
  const meanInverseS = s1.reduce((a, x) => a + 1 / x.sumTT, 0) / n;
  const spreadVar = Math.max(0, slopeVariance - (noiseVar ?? 0) * meanInverseS);
  return {
    devices: n,
    mean,
    spread: Math.sqrt(spreadVar),
    noise: noiseVar === null ? null : Math.sqrt(noiseVar),
    noiseDf,
    slopeVariance,
    meanInverseS,
  };
}

/**
 * One device's slope given its own path and the lot's slope distribution (the normal–normal
 * posterior, the best linear unbiased predictor of a random coefficient): precision
 * 1/σ_b² + S/σ_e², mean (μ/σ_b² + Σt·y/σ_e²)/precision. Without noise the path is its slope; without
 * spread the lot's mean is.
 */
export function deviceSlope(
  path: { sumTT: number; sumTY: number },
  lot: { mean: number; spreadVar: number; noiseVar: number },
): { mean: number; sd: number } {
  if (!(lot.noiseVar > 0)) return { mean: path.sumTT > 0 ? path.sumTY / path.sumTT : lot.mean, sd: 0 };
  if (!(lot.spreadVar > 0)) return { mean: lot.mean, sd: 0 };
  const precision = 1 / lot.spreadVar + path.sumTT / lot.noiseVar;
  const m = (lot.mean / lot.spreadVar + path.sumTY / lot.noiseVar) / precision;
  return { mean: m, sd: Math.sqrt(1 / precision) };
}
