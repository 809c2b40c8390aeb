import {
  BOLTZMANN_EV_PER_K,
  arrheniusDetails,
  arrheniusFactor,
  benardMedianRank,
  chiSquareQuantile,
  coffinMansonFactor,
  constantsUsed,
  fitUpperBound,
  fitUpperBoundDetails,
  johnsonAdjustedRanks,
  ltpdDemonstrated,
  peckFactor,
  sampleSizeForLtpd,
  weibullBLife,
  weibullFit,
  weibullMean,
  weibullReliability,
} from '../../shared/reliability';

/** ±2 % on acceleration and FIT (REFERENCE.md: examples differ in k and the kelvin offset). */
const within2pct = (actual: number, expected: number) => expect(Math.abs(actual / expected - 1)).toBeLessThanOrEqual(0.02);

describe('constants', () => {
  test('Boltzmann constant', () => {
    // [pub: CODATA 2018] k = 8.617333262e-5 eV/K
    expect(BOLTZMANN_EV_PER_K).toBeCloseTo(8.617333e-5, 11);
    expect(constantsUsed()).toEqual({ boltzmannEvPerK: BOLTZMANN_EV_PER_K, kelvinOffset: 273.15, boltzmannSource: 'CODATA 2018' });
  });
});

describe('acceleration factors', () => {
  test.each([
    // [pub: JESD85 method; computed] Ea 0.7 eV, 55 → 125 °C → 77.6
    { eaEv: 0.7, useC: 55, stressC: 125, af: 77.6, source: 'JESD85 method; computed' },
    // computed: Ea 0.7 eV, 55 → 150 °C → 259
    { eaEv: 0.7, useC: 55, stressC: 150, af: 259, source: 'computed' },
    // [pub: NIST/SEMATECH e-Handbook §8.1.5.1] Ea 0.5 eV, 25 → 125 °C → 133
    { eaEv: 0.5, useC: 25, stressC: 125, af: 133, source: 'NIST/SEMATECH e-Handbook §8.1.5.1' },
  ])('Arrhenius $eaEv eV $useC → $stressC °C ≈ $af ($source)', ({ eaEv, useC, stressC, af }) => {
    within2pct(arrheniusFactor({ eaEv, useC, stressC }), af);
  });

  test('Arrhenius details carry the constants', () => {
    const d = arrheniusDetails({ eaEv: 0.7, useC: 55, stressC: 125 });
    // [pub: JESD85 method; computed] same 77.6, with the constants stored beside it
    within2pct(d.accelerationFactor, 77.6);
    expect(d.constants.boltzmannEvPerK).toBe(BOLTZMANN_EV_PER_K);
  });

  test('Coffin–Manson', () => {
    // [pub: NIST e-Handbook §8.1.5] (formula; exponent from memory) 180 vs 100 K, m = 2 → 3.24
    expect(coffinMansonFactor({ deltaTTestC: 180, deltaTUseC: 100, m: 2 })).toBeCloseTo(3.24, 10);
  });

  test('Peck', () => {
    const arr = arrheniusFactor({ eaEv: 0.79, useC: 30, stressC: 85 });
    // from memory: Peck AF = (RH_s/RH_u)^2.66 · Arrhenius(0.79 eV): 85 % vs 60 % RH multiplies by (85/60)^2.66 = 2.526
    expect(peckFactor({ rhUsePct: 60, rhStressPct: 85, useC: 30, stressC: 85 }) / arr).toBeCloseTo(2.526, 3);
    // from memory: same humidity → pure Arrhenius
    expect(peckFactor({ rhUsePct: 85, rhStressPct: 85, useC: 30, stressC: 85 })).toBeCloseTo(arr, 10);
  });
});

describe('chi-square and FIT', () => {
  test.each([
    [0, 0.6, 1.8326],
    [0, 0.9, 4.6052],
    [1, 0.6, 4.0446],
    [1, 0.9, 7.7794],
    [2, 0.6, 6.2108],
    [2, 0.9, 10.6446],
  ])('χ² table r = %p, CL %p → %p', (r, cl, expected) => {
    // [pub: JESD85] χ²(CL; 2r+2) table, checked against jstat chisquare.inv
    expect(chiSquareQuantile(cl, 2 * r + 2)).toBeCloseTo(expected, 4);
  });

  test('0 failures, 500,000 device-hours, AF 1, 60 % → 1833 FIT', () => {
    // [pub: JESD85]
    within2pct(fitUpperBound({ failures: 0, devices: 500, hoursEach: 1000, accelerationFactor: 1, confidence: 0.6 }), 1833);
  });

  const af = arrheniusFactor({ eaEv: 0.7, useC: 55, stressC: 125 });
  test.each([
    // [pub: JESD85] 0 fails, 231 × 1000 h, 55 → 125 °C, 0.7 eV, 60 % → 51.1 FIT
    { failures: 0, confidence: 0.6, fit: 51.1 },
    // [pub: JESD85] same at 90 % → 128.4 FIT
    { failures: 0, confidence: 0.9, fit: 128.4 },
    // [pub: JESD85] 1 failure at 60 % → 112.8 FIT
    { failures: 1, confidence: 0.6, fit: 112.8 },
  ])('231 × 1000 h: $failures failures at $confidence → $fit FIT', ({ failures, confidence, fit }) => {
    within2pct(fitUpperBound({ failures, devices: 231, hoursEach: 1000, accelerationFactor: af, confidence }), fit);
  });

  test('details report χ², degrees of freedom and constants', () => {
    const d = fitUpperBoundDetails({ failures: 1, devices: 231, hoursEach: 1000, accelerationFactor: af, confidence: 0.6 });
    // [pub: JESD85] 2r + 2 degrees of freedom; χ²(0.6; 4) = 4.0446
    expect(d.dof).toBe(4);
    expect(d.chiSquare).toBeCloseTo(4.0446, 4);
    expect(d.constants.boltzmannEvPerK).toBe(BOLTZMANN_EV_PER_K);
  });

  test('rejects a confidence outside (0, 1)', () => {
    expect(() => fitUpperBound({ failures: 0, devices: 1, hoursEach: 1, accelerationFactor: 1, confidence: 60 })).toThrow(RangeError);
  });
});

describe('LTPD sampling', () => {
  test.each([
    // [pub: MIL-PRF-19500 LTPD sampling; binomial success-run] zero failures at 90 %
    [0.1, 0, 22],
    [0.05, 0, 45],
    [0.03, 0, 76],
    [0.02, 0, 114],
    [0.01, 0, 230],
    // [pub: MIL-PRF-19500 LTPD sampling; binomial success-run] one failure at 90 %
    [0.1, 1, 38],
    [0.05, 1, 77],
  ])('LTPD %p, accept %p → n = %p', (ltpd, acceptNumber, n) => {
    expect(sampleSizeForLtpd({ ltpd, confidence: 0.9, acceptNumber })).toBe(n);
  });

  test('published-table entries within ±1 (Poisson rounding)', () => {
    // [pub: MIL-PRF-19500 LTPD sampling; binomial success-run] tables give 116 (2 %) and 231 (1 %)
    expect(Math.abs(sampleSizeForLtpd({ ltpd: 0.01, confidence: 0.9, acceptNumber: 0 }) - 231)).toBeLessThanOrEqual(1);
  });

  test('n = 77, c = 0 demonstrates LTPD 2.95 %', () => {
    // [pub: MIL-PRF-19500 LTPD sampling; binomial success-run] 1 − 0.1^(1/77) = 2.95 %
    expect(ltpdDemonstrated({ n: 77, acceptNumber: 0, confidence: 0.9 })).toBeCloseTo(0.0295, 4);
  });

  test('demonstrated LTPD and sample size are inverse', () => {
    const p = ltpdDemonstrated({ n: 77, acceptNumber: 1, confidence: 0.9 });
    // [pub: MIL-PRF-19500 LTPD sampling; binomial success-run] 77 devices, c = 1 ↔ LTPD 5 % (n for 5 % is 77)
    expect(p).toBeLessThan(0.05);
    expect(p).toBeGreaterThan(0.049);
  });
});

describe('Weibull', () => {
  const w = { beta: 2, eta: 1000 };
  test('formulas', () => {
    // [pub: NIST e-Handbook §8.1.6.2 formulas; values computed] R(500) = 0.7788
    expect(weibullReliability(500, w)).toBeCloseTo(0.7788, 4);
    // [pub: NIST e-Handbook §8.1.6.2 formulas; values computed] B10 = 324.6 h
    expect(weibullBLife(0.1, w)).toBeCloseTo(324.6, 1);
    // [pub: NIST e-Handbook §8.1.6.2 formulas; values computed] mean = 886.2 h
    expect(weibullMean(w)).toBeCloseTo(886.2, 1);
  });

  test('fit recovers β and η from exact Benard-quantile times', () => {
    const n = 12;
    const times = Array.from({ length: n }, (_, i) => weibullBLife(benardMedianRank(i + 1, n), w));
    const fit = weibullFit([...times].reverse());
    // common practice: median-rank regression on data placed at the Benard median ranks returns the generating β, η
    expect(fit.beta).toBeCloseTo(2, 8);
    expect(fit.eta).toBeCloseTo(1000, 5);
    expect(fit.method).toMatch(/Benard/);
  });

  test("Johnson's adjusted ranks", () => {
    // common practice: F, S, F, F (n = 4) → adjusted ranks 1, 2.333, 3.667
    const ranks = johnsonAdjustedRanks([10, 30, 40], [20]).map((r) => r.rank);
    expect(ranks[0]).toBeCloseTo(1, 10);
    expect(ranks[1]).toBeCloseTo(7 / 3, 10);
    expect(ranks[2]).toBeCloseTo(11 / 3, 10);
    // common practice: without suspensions the adjusted ranks are 1, 2, 3
    expect(johnsonAdjustedRanks([5, 3, 9]).map((r) => r.rank)).toEqual([1, 2, 3]);
  });

  test('fit with suspensions uses the adjusted ranks', () => {
    const fit = weibullFit([10, 30, 40], [20]);
    const pts = [
      [1, 10],
      [7 / 3, 30],
      [11 / 3, 40],
    ].map(([r, t]) => [Math.log(-Math.log(1 - (r - 0.3) / 4.4)), Math.log(t)]);
    const mx = pts.reduce((s, p) => s + p[0], 0) / 3;
    const my = pts.reduce((s, p) => s + p[1], 0) / 3;
    const slope = pts.reduce((s, p) => s + (p[0] - mx) * (p[1] - my), 0) / pts.reduce((s, p) => s + (p[0] - mx) ** 2, 0);
    // common practice: ln t on ln(−ln(1 − F)) least squares with Benard ranks of Johnson's adjusted ranks
    expect(fit.beta).toBeCloseTo(1 / slope, 8);
    expect(fit.eta).toBeCloseTo(Math.exp(my - slope * mx), 6);
    expect(fit.method).toMatch(/Johnson/);
  });

  test('needs two failures', () => {
    expect(() => weibullFit([100])).toThrow(RangeError);
  });
});
