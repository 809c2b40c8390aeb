/**
 * The verdict forecast of one plan's sample: from the readings so far, the predicted number of
 * devices beyond their limits at each coming read point (with an interval), the chance that the lot
 * passes at the plan's end (failures ≤ accept number, the failures already counted included), and
 * the read point at which that chance became certain enough (FORECAST_CERTAINTY).
 *
 * Model: random slopes through the origin per drift parameter (./model.ts, Lu & Meeker 1993 two-stage).
 * Interval: a seeded simulation of FORECAST_SIMULATIONS lots. Each simulated lot first draws the
 * lot's parameters from their sampling distributions — μ from N(μ̂, var(b̂)/n), var(b̂) and σ_e² as
 * scaled chi-squares on n − 1 and Σ(n_i − 1) degrees of freedom — so the estimates' uncertainty is
 * in the interval; then each device still in the test draws its slope given its own path
 * (deviceSlope) and a measurement with noise at every coming read point; a device fails at the first
 * read point where a parameter is beyond the plan's limit (the judge's own limits). Catastrophic
 * failures (opens, shorts) are counted when they happen, never predicted.
 */
import type { PlanEvidence } from '../verdict/evidence';
import type { PlanJudgement } from '../verdict/judge';
import { icboRatioLimit } from '../stats';
import { deviceSlope, fitSlopes, originSlope, type SlopeFit } from './model';
import { seededDraws } from './simulate';
import { FORECAST_INTERVAL, FORECAST_MIN_READ_POINTS, FORECAST_SEED, FORECAST_SIMULATIONS, certainty, type ForecastState } from './rules';
import { countOf } from '../domain/format';

export type ForecastParameter = 'hfe' | 'icbo' | 'vcesat';

export interface ForecastPath {
  parameter: ForecastParameter;
  /** Read points after time zero and the change there in the transformed scale (% hFE, ln ICBO ratio, mV). */
  hours: number[];
  values: number[];
  /** Failure limits in the same scale; null = none on that side. */
  lower: number | null;
  upper: number | null;
}

export interface ForecastDevice {
  serial: string;
  /** Read point of a counted failure (the judge's), or null. */
  failedAtH: number | null;
  /** Left the sample (lost, damaged, excluded): neither a failure nor forecast. */
  removed: boolean;
  paths: ForecastPath[];
}

export interface ForecastInput {
  /** The plan's read points, time zero included. */
  readPointsH: number[];
  acceptNumber: number;
  /** The latest read point with judged readings; null before any. */
  asOfH: number | null;
  devices: ForecastDevice[];
}

export interface ComingReadPoint {
  hours: number;
  /** Devices beyond a limit by this read point (failures so far included): mean and interval. */
  expected: number;
  low: number;
  high: number;
}

export interface ParameterFit {
  parameter: ForecastParameter;
  devices: number;
  mean: number;
  spread: number;
  noise: number | null;
}

export interface PlanForecast {
  state: ForecastState;
  asOfH: number | null;
  /** Chance that failures at the plan's end are within the accept number; null when it cannot be told. */
  pPass: number | null;
  certain: 'pass' | 'fail' | null;
  failuresNow: number;
  acceptNumber: number;
  /** Devices still in the test and forecast. */
  devicesForecast: number;
  endH: number;
  coming: ComingReadPoint[];
  parameters: ParameterFit[];
  note: string;
}

export const FORECAST_METHOD =
  'Random slope per device through the origin (hFE % change, ln ICBO ratio, VCE(sat) mV); lot mean, spread and measurement noise by the two-stage method of Lu & Meeker (1993); seeded simulation with the estimates’ uncertainty.';

const fmtH = (h: number) => `${Math.round(h).toLocaleString('en-GB')} h`;

/** The forecast's input from the judge's output for one plan (its devices, paths and limits: one rule, one place). */
export function forecastInput(pe: PlanEvidence, pj: PlanJudgement): ForecastInput {
  const c = pe.plan.criteria;
  const devices: ForecastDevice[] = pj.devices.map((d, i) => {
    const deg = pj.degradation.devices[i];
    const ev = pe.devices[i];
    const paths: ForecastPath[] = [];
    for (const p of deg?.paths ?? []) {
      const hours = p.points.map((x) => x.hours);
      if (p.parameter === 'icbo') {
        const t0 = ev?.readings.find((r) => r.readPointH === 0)?.icboA ?? null;
        const lim = icboRatioLimit(t0, c);
        if (lim === null) continue;
        paths.push({ parameter: 'icbo', hours, values: p.points.map((x) => Math.log(x.value)), lower: null, upper: Math.log(lim) });
      } else {
        const l = p.parameter === 'hfe' ? c.hfeChangePct : c.vcesatShiftV * 1000;
        paths.push({ parameter: p.parameter, hours, values: p.points.map((x) => x.value), lower: -l, upper: l });
      }
    }
    return { serial: d.serial, failedAtH: d.status === 'fail' ? d.failedAtH : null, removed: d.status === 'removed', paths };
  });
  return { readPointsH: pe.plan.readPointsH, acceptNumber: pe.plan.acceptNumber, asOfH: pj.latestH, devices };
}

interface Prepared {
  parameter: ForecastParameter;
  fit: SlopeFit & { noise: number };
}

const PARAMS: ForecastParameter[] = ['hfe', 'icbo', 'vcesat'];

/** The forecast from the input (pure, seeded). */
export function forecastPlan(input: ForecastInput, options: { simulations?: number; seed?: number } = {}): PlanForecast {
  const hours = [...new Set([0, ...input.readPointsH])].sort((a, b) => a - b);
  const endH = hours[hours.length - 1];
  const failuresNow = input.devices.filter((d) => d.failedAtH !== null).length;
  const c = input.acceptNumber;
  const inTest = input.devices.filter((d) => d.failedAtH === null && !d.removed);
  const base = { asOfH: input.asOfH, failuresNow, acceptNumber: c, endH, devicesForecast: 0, coming: [], parameters: [] };
  const settled = (state: ForecastState, pPass: number | null, note: string): PlanForecast => ({
    ...base,
    state,
    pPass,
    certain: certainty(pPass),
    note,
  });
  if (failuresNow > c)
    return settled(
      input.asOfH !== null && input.asOfH >= endH ? 'final' : 'forecast',
      0,
      `${countOf(failuresNow, 'device')} ${failuresNow === 1 ? 'has' : 'have'} failed already, more than the accept number ${c}: the lot cannot pass.`,
    );
  if (input.asOfH !== null && input.asOfH >= endH)
    return settled('final', 1, `Every read point is in: ${countOf(failuresNow, 'failure')}, accept number ${c}.`);
  const seen = hours.filter((h) => h > 0 && input.asOfH !== null && h <= input.asOfH).length;
  if (seen < FORECAST_MIN_READ_POINTS)
    return settled(
      'not-enough-data',
      null,
      `Needs readings at ${FORECAST_MIN_READ_POINTS} read points after time zero to tell the devices' drift apart from measurement noise; ${seen} so far.`,
    );

  const prepared: Prepared[] = [];
  for (const parameter of PARAMS) {
    const paths = input.devices.flatMap((d) => d.paths.filter((p) => p.parameter === parameter));
    const fit = fitSlopes(paths);
    if (fit && fit.noise !== null) prepared.push({ parameter, fit: { ...fit, noise: fit.noise } });
  }
  const parameters: ParameterFit[] = prepared.map((p) => ({
    parameter: p.parameter,
    devices: p.fit.devices,
    mean: p.fit.mean,
    spread: p.fit.spread,
    noise: p.fit.noise,
  }));
  if (!prepared.length)
    return { ...settled('no-drift-data', null, 'No device has drift readings at two read points after time zero.'), parameters };

  const coming = hours.filter((h) => h > input.asOfH!);
  const sims = options.simulations ?? FORECAST_SIMULATIONS;
  const draw = seededDraws(options.seed ?? FORECAST_SEED);
  // Per device and parameter: Σt², Σt·y of its path, and its limits.
  const work = inTest.map((d) =>
    prepared.flatMap((pp, k) =>
      d.paths
        .filter((p) => p.parameter === pp.parameter && p.hours.some((t) => t > 0))
        .map((p) => {
          const s = originSlope(p);
          return { k, sumTT: s.sumTT, sumTY: s.slope * s.sumTT, lower: p.lower, upper: p.upper };
        }),
    ),
  );
  const counts = coming.map(() => new Float64Array(sims));
  const lot = prepared.map(() => ({ mean: 0, spreadVar: 0, noiseVar: 0 }));
  for (let r = 0; r < sims; r++) {
    prepared.forEach((pp, k) => {
      const f = pp.fit;
      const slopeVar = f.devices > 1 ? f.slopeVariance * draw.chiSquareOverDf(f.devices - 1) : 0;
      const noiseVar = f.noise * f.noise * draw.chiSquareOverDf(f.noiseDf);
      lot[k].mean = f.mean + draw.normal() * Math.sqrt(f.slopeVariance / f.devices);
      lot[k].noiseVar = noiseVar;
      lot[k].spreadVar = Math.max(0, slopeVar - noiseVar * f.meanInverseS);
    });
    const firstFail = new Array<number>(coming.length).fill(0);
    for (const paths of work) {
      let at = coming.length;
      for (const p of paths) {
        const s = deviceSlope(p, lot[p.k]);
        const b = s.mean + (s.sd > 0 ? s.sd * draw.normal() : 0);
        const sdE = Math.sqrt(lot[p.k].noiseVar);
        for (let j = 0; j < Math.min(at, coming.length); j++) {
          const y = b * coming[j] + (sdE > 0 ? sdE * draw.normal() : 0);
          if ((p.upper !== null && y > p.upper) || (p.lower !== null && y < p.lower)) {
            at = j;
            break;
          }
        }
      }
      if (at < coming.length) firstFail[at]++;
    }
    let cum = failuresNow;
    for (let j = 0; j < coming.length; j++) {
      cum += firstFail[j];
      counts[j][r] = cum;
    }
  }
  const tail = (1 - FORECAST_INTERVAL) / 2;
  const comingOut: ComingReadPoint[] = coming.map((h, j) => {
    const sorted = Array.from(counts[j]).sort((a, b) => a - b);
    const q = (p: number) => sorted[Math.min(sims - 1, Math.max(0, Math.floor(p * sims)))];
    return { hours: h, expected: sorted.reduce((a, x) => a + x, 0) / sims, low: q(tail), high: q(1 - tail) };
  });
  const last = counts[coming.length - 1];
  let pass = 0;
  for (let r = 0; r < sims; r++) if (last[r] <= c) pass++;
  const pPass = pass / sims;
  const end = comingOut[comingOut.length - 1];
  return {
    ...base,
    state: 'forecast',
    pPass,
    certain: certainty(pPass),
    devicesForecast: work.filter((w) => w.length > 0).length,
    coming: comingOut,
    parameters,
    note: `From ${inTest.length} devices still in the test at ${fmtH(input.asOfH!)}: about ${+end.expected.toFixed(1)} failures expected by ${fmtH(endH)} (${end.low}–${end.high}), accept number ${c}.`,
  };
}
