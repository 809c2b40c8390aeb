/**
 * The verdict forecast (shared/forecast): the random-slope closed forms, the two-stage estimates
 * recovered from generated lots with known truth, the forecast's edge cases, and the back-test.
 */
import { jStat } from 'jstat';
import { mean, sampleStandardDeviation } from 'simple-statistics';
import {
  backtest,
  backtestLots,
  certainFrom,
  conditionalFraction,
  evidenceAt,
  fitSlopes,
  forecastInput,
  forecastPlan,
  fractionBeyondLognormalSlope,
  fractionBeyondNormalSlope,
  generatedLot,
  lotChance,
  originSlope,
  FORECAST_CERTAINTY,
  type ForecastDevice,
} from '../../shared/forecast';
import { judgeLot } from '../../shared/verdict';

describe('closed forms of the random-slope model (REFERENCE.md A3)', () => {
  test('NIST e-Handbook §8.4.2.3: slopes through the origin and the crossing of −20 %', () => {
    // [pub: NIST/SEMATECH e-Handbook §8.4.2.3; REFERENCE.md A3 calc] b = Σty/Σt², T = −20/b:
    // 2213.0, 1266.4, 3249.2, 1672.4, 1091.5 h
    const t = [168, 500, 1000];
    const paths = [
      [-1.5, -4.4, -9.1],
      [-2.6, -7.9, -15.8],
      [-1.0, -3.2, -6.1],
      [-2.0, -6.1, -11.9],
      [-3.1, -9.0, -18.4],
    ];
    const crossings = paths.map((y) => -20 / originSlope({ hours: t, values: y }).slope);
    [2213.0, 1266.4, 3249.2, 1672.4, 1091.5].forEach((T, i) => expect(crossings[i]).toBeCloseTo(T, 1));
    // [pub: NIST §8.4.2.3; REFERENCE.md A3 calc] lognormal of those times: μ 7.46991, σ (n−1) 0.43802
    const logs = crossings.map(Math.log);
    expect(mean(logs)).toBeCloseTo(7.46991, 4);
    expect(sampleStandardDeviation(logs)).toBeCloseTo(0.43802, 4);
  });

  test.each([
    // [pub: Lu & Meeker 1993; REFERENCE.md A3 calc] lognormal slope, median 0.01 %/h, σ 0.4, DF 20 %
    [1000, 0.04156],
    [4000, 0.95844],
  ])('lognormal slope: F(%p h) = %p', (hours, f) => {
    expect(fractionBeyondLognormalSlope({ median: 0.01, sigma: 0.4, level: 20, hours })).toBeCloseTo(f, 5);
  });

  test.each([
    // [pub: Lu & Meeker 1993; REFERENCE.md A3 calc] normal slope μ −0.008, σ 0.003 %/h, DF −20 %
    [2000, 0.25249],
    [4000, 0.84134],
    [1e12, 0.99617],
  ])('normal slope, decreasing: F(%p h) = %p', (hours, f) => {
    expect(fractionBeyondNormalSlope({ mean: -0.008, sd: 0.003, level: -20, hours })).toBeCloseTo(f, 5);
  });

  test('survivors at 1000 h failing by 2000 h (REFERENCE.md A3: 0.25247)', () => {
    const f = (hours: number) => fractionBeyondNormalSlope({ mean: -0.008, sd: 0.003, level: -20, hours });
    // [pub: Lu & Meeker 1993; REFERENCE.md A3 calc] [F(2000) − F(1000)] / [1 − F(1000)] = 0.25247
    expect(conditionalFraction(f(1000), f(2000))).toBeCloseTo(0.25247, 5);
  });

  test('an increasing level is the other tail (jstat normal cdf)', () => {
    // [jstat] 1 − Φ((20/2000 − 0.008)/0.003)
    expect(fractionBeyondNormalSlope({ mean: 0.008, sd: 0.003, level: 20, hours: 2000 })).toBeCloseTo(
      1 - jStat.normal.cdf((0.01 - 0.008) / 0.003, 0, 1),
      10,
    );
  });
});

describe('two-stage estimates recover the generated truth', () => {
  test.each([
    // [generated, known truth] tolerance: mean within 3 standard errors, spread within 15 %, noise within 5 %
    [1, -0.01, 0.003, 0.8],
    [2, -0.006, 0.0015, 0.3],
    [3, 0.004, 0.002, 1.2],
  ])('seed %p: mean %p, spread %p %%/h, noise %p %%', (seed, trueMean, spread, noise) => {
    const { evidence, slopes } = generatedLot({
      seed,
      devices: 400,
      readPointsH: [0, 168, 500, 1000],
      acceptNumber: 0,
      mean: trueMean,
      spread,
      noise,
    });
    const j = judgeLot(evidence, []);
    const input = forecastInput(evidence.plans[0], j.plans[0]);
    const fit = fitSlopes(input.devices.flatMap((d) => d.paths.filter((p) => p.parameter === 'hfe')))!;
    const se = Math.sqrt(spread ** 2 + noise ** 2 / (168 ** 2 + 500 ** 2 + 1000 ** 2)) / Math.sqrt(400);
    expect(Math.abs(fit.mean - trueMean)).toBeLessThan(3 * se);
    expect(Math.abs(fit.spread / spread - 1)).toBeLessThan(0.15);
    expect(Math.abs(fit.noise! / noise - 1)).toBeLessThan(0.05);
    // the truth the generator drew (its own sample) agrees too
    expect(Math.abs(fit.mean - mean(slopes))).toBeLessThan(3 * se);
  });

  test('noise-free paths: no noise, the spread is the slopes’ own', () => {
    const paths = [-0.01, -0.012, -0.008].map((b) => ({ hours: [168, 500], values: [b * 168, b * 500] }));
    const fit = fitSlopes(paths)!;
    expect(fit.noise).toBeCloseTo(0, 12);
    // [arithmetic] sample sd of −0.01, −0.012, −0.008 = 0.002
    expect(fit.spread).toBeCloseTo(0.002, 12);
  });
});

describe('forecastPlan', () => {
  const device = (serial: string, b: number, hours: number[], over: Partial<ForecastDevice> = {}): ForecastDevice => ({
    serial,
    failedAtH: null,
    removed: false,
    paths: [{ parameter: 'hfe', hours, values: hours.map((h) => b * h), lower: -15, upper: 15 }],
    ...over,
  });

  test('one read point after time zero: not enough data, no number', () => {
    const f = forecastPlan({ readPointsH: [0, 168, 500, 1000], acceptNumber: 0, asOfH: 168, devices: [device('A', -0.01, [168])] });
    expect(f.state).toBe('not-enough-data');
    expect(f.pPass).toBeNull();
    expect(f.note).toBe(
      "Needs readings at 2 read points after time zero to tell the devices' drift apart from measurement noise; 1 so far.",
    );
  });

  test('every device failed: the lot cannot pass, whatever comes', () => {
    const devs = ['A', 'B', 'C'].map((s) => device(s, -0.05, [168, 500], { failedAtH: 500 }));
    const f = forecastPlan({ readPointsH: [0, 168, 500, 1000], acceptNumber: 1, asOfH: 500, devices: devs });
    expect(f.pPass).toBe(0);
    expect(f.certain).toBe('fail');
  });

  test('zero drift: no failures expected, certain to pass', () => {
    const devs = Array.from({ length: 20 }, (_, i) => device(`D${i}`, 0, [168, 500]));
    const f = forecastPlan({ readPointsH: [0, 168, 500, 1000], acceptNumber: 0, asOfH: 500, devices: devs }, { simulations: 500 });
    expect(f.state).toBe('forecast');
    expect(f.pPass).toBe(1);
    expect(f.coming).toEqual([{ hours: 1000, expected: 0, low: 0, high: 0 }]);
  });

  test('noise-free straight paths are their own future: exactly the devices past 15 % at 1000 h fail', () => {
    // b·1000 beyond −15 %: −0.016 and −0.02 fail; −0.01 does not (arithmetic)
    const devs = [-0.01, -0.016, -0.02].map((b, i) => device(`D${i}`, b, [168, 500]));
    const f = forecastPlan({ readPointsH: [0, 168, 500, 1000], acceptNumber: 1, asOfH: 500, devices: devs }, { simulations: 200 });
    expect(f.coming[0]).toEqual({ hours: 1000, expected: 2, low: 2, high: 2 });
    expect(f.pPass).toBe(0);
  });

  test('the forecast at 500 h holds the generated lot’s real count at 1000 h in its interval', () => {
    const { evidence } = generatedLot({
      seed: 7,
      devices: 77,
      readPointsH: [0, 168, 500, 1000],
      acceptNumber: 0,
      mean: -0.011,
      spread: 0.002,
      noise: 0.6,
    });
    const full = judgeLot(evidence, []).plans[0];
    const cut = evidenceAt(evidence, 500);
    const f = forecastPlan(forecastInput(cut.plans[0], judgeLot(cut, []).plans[0]));
    expect(f.state).toBe('forecast');
    expect(full.sample.failures).toBeGreaterThanOrEqual(f.coming[0].low);
    expect(full.sample.failures).toBeLessThanOrEqual(f.coming[0].high);
  });

  test('same evidence, same numbers (seeded)', () => {
    const { evidence } = generatedLot({
      seed: 8,
      devices: 30,
      readPointsH: [0, 168, 500, 1000],
      acceptNumber: 0,
      mean: -0.012,
      spread: 0.002,
      noise: 0.5,
    });
    const cut = evidenceAt(evidence, 500);
    const pj = judgeLot(cut, []).plans[0];
    const a = forecastPlan(forecastInput(cut.plans[0], pj));
    const b = forecastPlan(forecastInput(cut.plans[0], pj));
    expect(a).toEqual(b);
  });
});

describe('history helpers', () => {
  test('certain from: the first point from which it stayed certain on one side', () => {
    expect(
      certainFrom([
        { hours: 168, pPass: 0.97 },
        { hours: 500, pPass: 0.6 },
        { hours: 750, pPass: 0.04 },
        { hours: 1000, pPass: 0 },
      ]),
    ).toEqual({ hours: 750, side: 'fail' });
    expect(certainFrom([{ hours: 168, pPass: null }])).toBeNull();
    expect(FORECAST_CERTAINTY).toBe(0.95);
  });

  test('a lot of independent plans passes when each does (product)', () => {
    expect(lotChance([{ pPass: 0.9 }, { pPass: 0.5 }])).toBeCloseTo(0.45, 12);
    expect(lotChance([{ pPass: null }, { pPass: 0 }])).toBe(0);
    expect(lotChance([{ pPass: null }, { pPass: 0.5 }])).toBeNull();
  });
});

describe('back-test on generated lots with known outcome', () => {
  test('calibration: each bin with 10 or more forecasts is within 0.25 of its observed pass rate; failing lots turn before their verdict', () => {
    const r = backtest(
      backtestLots(12).map((l) => ({ evidence: l.evidence })),
      { simulations: 400 },
    );
    expect(r.lots).toHaveLength(12);
    for (const b of r.bins.filter((x) => x.forecasts >= 10)) expect(Math.abs(b.meanPredicted! - b.observedPassRate!)).toBeLessThan(0.25);
    // Brier score of a useless constant 0.5 forecast is 0.25 (common practice): well below it
    expect(r.brier!).toBeLessThan(0.15);
    expect(r.failedLots).toBeGreaterThan(0);
    expect(r.failedTurnedEarlier).toBe(r.failedLots);
  });
});
