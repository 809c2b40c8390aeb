/**
 * The fraction of a lot beyond a failure level DF by time t when each device drifts D = b·t with a
 * random slope b (Lu & Meeker, Technometrics 35(2):161–174, 1993; Meeker & Escobar 1998 ch. 13, from
 * memory). Closed forms used to check the simulation (tests/unit/forecast-model.test.ts).
 */
import { jStat } from 'jstat';

/**
 * b normal N(μ_b, σ_b²): a device is beyond DF at t when b·t passes DF, so for a decreasing level
 * (DF < 0) F(t) = Φ((DF/t − μ_b)/σ_b), and for an increasing one F(t) = 1 − Φ((DF/t − μ_b)/σ_b).
 * F(∞) = Φ(−μ_b/σ_b) (DF < 0) is below 1: devices drifting the other way never fail.
 */
export function fractionBeyondNormalSlope(p: { mean: number; sd: number; level: number; hours: number }): number {
  if (!(p.hours > 0)) return 0;
  const x = p.level / p.hours;
  if (!(p.sd > 0)) return p.level < 0 ? (p.mean <= x ? 1 : 0) : p.mean >= x ? 1 : 0;
  const z = (x - p.mean) / p.sd;
  return p.level < 0 ? jStat.normal.cdf(z, 0, 1) : 1 - jStat.normal.cdf(z, 0, 1);
}

/**
 * |b| lognormal with median m_b and log-spread σ: F(t) = Φ([ln t − ln(|DF|/m_b)]/σ), a lognormal
 * life with median |DF|/m_b.
 */
export function fractionBeyondLognormalSlope(p: { median: number; sigma: number; level: number; hours: number }): number {
  if (!(p.hours > 0)) return 0;
  return jStat.normal.cdf((Math.log(p.hours) - Math.log(Math.abs(p.level) / p.median)) / p.sigma, 0, 1);
}

/** Devices still within the level at t1 that pass it by t2: [F(t2) − F(t1)] / [1 − F(t1)]. */
export function conditionalFraction(f1: number, f2: number): number {
  return f1 >= 1 ? 0 : (f2 - f1) / (1 - f1);
}
