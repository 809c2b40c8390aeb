import { criteriaSchema } from '../../shared/schemas/plans';
import {
  deviceDrift,
  individualsChart,
  lotDriftSummary,
  normaliseGainToReference,
  pseudoFailureTime,
  runRuleViolations,
  welchT,
} from '../../shared/stats';

const criteria = criteriaSchema.parse({});
const reading = (p: Partial<{ hfe: number | null; icboA: number | null; vcesatV: number | null }>) => ({
  hfe: null,
  icboA: null,
  vcesatV: null,
  ...p,
});
const param = (r: ReturnType<typeof deviceDrift>, name: string) => r.parameters.find((x) => x.parameter === name)!;

describe('gain normalisation', () => {
  test('inverse of the gain-temperature law', () => {
    // [pub: Gummel–Poon model as in SPICE] 153.9 measured at 127 °C with XTB 1.5 is 100 at 27 °C
    expect(normaliseGainToReference({ hfe: 153.9, measuredC: 127, referenceC: 27, xtb: 1.5 })).toBeCloseTo(100, 0);
    // [pub: Gummel–Poon model as in SPICE] 68.5 at −40 °C is 100 at 27 °C
    expect(normaliseGainToReference({ hfe: 68.5, measuredC: -40, referenceC: 27, xtb: 1.5 })).toBeCloseTo(100, 0);
  });
});

describe('device drift against MIL-PRF-19500 delta limits (default criteria)', () => {
  test.each([
    // [pub: MIL-PRF-19500 slash-sheet delta limits] ICBO initial 50 nA → 240 nA passes, 260 nA fails
    [50e-9, 240e-9, true],
    [50e-9, 260e-9, false],
    // [pub: MIL-PRF-19500 slash-sheet delta limits] initial 1 µA → 1.9 µA passes, 2.1 µA fails
    [1e-6, 1.9e-6, true],
    [1e-6, 2.1e-6, false],
  ])('ICBO %p → %p passes: %p', (i0, i1, pass) => {
    const r = deviceDrift({ timeZero: reading({ icboA: i0 }), reading: reading({ icboA: i1 }), criteria });
    expect(param(r, 'icbo').pass).toBe(pass);
    expect(r.pass).toBe(pass);
  });

  test('hFE band ±15 %', () => {
    const at = (h: number) => deviceDrift({ timeZero: reading({ hfe: 80 }), reading: reading({ hfe: h }), criteria });
    // [pub: MIL-PRF-19500 slash-sheet delta limits] hFE 80 at ±15 % → band [68, 92]
    expect(param(at(80), 'hfe').allowed!.low).toBeCloseTo(68, 10);
    expect(param(at(80), 'hfe').allowed!.high).toBeCloseTo(92, 10);
    expect(at(68).pass).toBe(true);
    expect(at(92).pass).toBe(true);
    expect(at(67.9).pass).toBe(false);
    expect(at(92.1).pass).toBe(false);
    // [pub: MIL-PRF-19500 slash-sheet delta limits] change reported in percent: 72 from 80 is −10 %
    expect(param(at(72), 'hfe').changePct).toBeCloseTo(-10, 10);
  });

  test('VCE(sat) shift ≤ 50 mV', () => {
    const at = (v: number) => deviceDrift({ timeZero: reading({ vcesatV: 0.2 }), reading: reading({ vcesatV: v }), criteria });
    // [pub: MIL-PRF-19500 slash-sheet delta limits] VCE(sat) change ≤ 50 mV: +40 mV passes, +60 mV fails
    expect(at(0.24).pass).toBe(true);
    expect(at(0.26).pass).toBe(false);
    expect(param(at(0.26), 'vcesat').delta).toBeCloseTo(0.06, 10);
  });

  test('overall verdict, reasons and unmeasured parameters', () => {
    const r = deviceDrift({
      timeZero: { hfe: 100, icboA: 50e-9, vcesatV: null },
      reading: { hfe: 80, icboA: 100e-9, vcesatV: 0.3 },
      criteria,
    });
    // [pub: MIL-PRF-19500 slash-sheet delta limits] hFE −20 % fails ±15 %; ICBO +50 nA within 200 nA
    expect(r.pass).toBe(false);
    expect(r.failed).toEqual(['hfe']);
    expect(param(r, 'hfe').reason).toMatch(/outside ±15 %/);
    expect(param(r, 'icbo').ratio).toBeCloseTo(2, 10);
    expect(param(r, 'vcesat').pass).toBeNull();
  });
});

describe('lot summary', () => {
  test('descriptive statistics', () => {
    const s = lotDriftSummary([-2, -4, -6, -8, -10]);
    // common practice: mean −6, sample sd √10 = 3.162, median −6, R type-7 quartiles −8 / −4
    expect(s).toMatchObject({ n: 5, mean: -6, min: -10, max: -2, median: -6, p25: -8, p75: -4 });
    expect(s.sd).toBeCloseTo(Math.sqrt(10), 10);
    // common practice: 5th percentile by linear interpolation = −10 + 0.2·2 = −9.6
    expect(s.p5).toBeCloseTo(-9.6, 10);
    expect(s.p95).toBeCloseTo(-2.4, 10);
  });
  test('single value has no sd', () => {
    expect(lotDriftSummary([3]).sd).toBeNull();
  });
});

describe('pseudo-failure time (NIST e-Handbook §8.4.2.3)', () => {
  test('hFE change through the origin', () => {
    const r = pseudoFailureTime({ hours: [168, 500, 1000], changes: [-2.1, -6.0, -12.2], limit: -20, model: 'linear-origin' });
    // [pub: NIST e-Handbook §8.4.2.3] −2.1 / −6.0 / −12.2 % at 168 / 500 / 1000 h crosses −20 % at 1644 h
    expect(Math.abs(r.hours! - 1644)).toBeLessThan(1);
  });
  test('leakage ratio, ln-ratio through the origin', () => {
    const r = pseudoFailureTime({ hours: [168, 500, 1000], changes: [1.3, 2.0, 3.6], limit: 5, model: 'log-ratio-origin' });
    // [pub: NIST e-Handbook §8.4.2.3] ratios 1.3 / 2.0 / 3.6 reach 5× at 1231 h
    expect(Math.abs(r.hours! - 1231)).toBeLessThan(1);
  });
  test('a path moving away from the limit never crosses', () => {
    // [pub: NIST e-Handbook §8.4.2.3] a path that improves has no pseudo-failure time
    expect(pseudoFailureTime({ hours: [168, 500], changes: [1, 2], limit: -20, model: 'linear-origin' }).hours).toBeNull();
  });
});

describe('individuals chart and run rules', () => {
  test('limits mean ± 2.66·MR̄', () => {
    const c = individualsChart([49, 51, 49, 51, 49, 51]);
    // [pub: Montgomery, Introduction to Statistical Quality Control] mean 50, MR̄ 2 → 44.68 / 55.32
    expect(c.mean).toBe(50);
    expect(c.mrBar).toBe(2);
    expect(c.lcl).toBeCloseTo(44.68, 10);
    expect(c.ucl).toBeCloseTo(55.32, 10);
    // [pub: Montgomery, Introduction to Statistical Quality Control] σ = MR̄/d2, d2 = 1.128
    expect(c.sigma).toBeCloseTo(2 / 1.128, 10);
  });

  const ctl = { mean: 0, sigma: 1 };
  const rules = (values: number[]) => runRuleViolations(values, ctl).map((v) => [v.rule, v.index, v.side]);

  test('rule 1: one point beyond 3σ', () => {
    // [pub: Western Electric Statistical Quality Control Handbook, 1956] 1 point beyond 3σ
    expect(rules([0.5, -0.5, -3.2, 0.5])).toEqual([[1, 2, 'below']]);
  });
  test('rule 2: two of three beyond 2σ on one side', () => {
    // [pub: Western Electric Statistical Quality Control Handbook, 1956] 2 of 3 beyond 2σ same side
    expect(rules([0.5, 2.5, -0.5, 2.2, 0.5])).toEqual([[2, 3, 'above']]);
    // [pub: Western Electric Statistical Quality Control Handbook, 1956] opposite sides do not count
    expect(rules([0.5, 2.5, -2.5, 0.5])).toEqual([]);
  });
  test('rule 3: four of five beyond 1σ on one side', () => {
    // [pub: Western Electric Statistical Quality Control Handbook, 1956] 4 of 5 beyond 1σ same side
    const v = runRuleViolations([-1.5, -1.2, 0.5, -1.1, -1.3], ctl);
    expect(v.map((x) => x.rule)).toEqual([3]);
    expect(v[0]).toMatchObject({ index: 4, indices: [0, 1, 3, 4], side: 'below' });
  });
  test('rule 4: eight in a row on one side', () => {
    // [pub: Western Electric Statistical Quality Control Handbook, 1956] 8 in a row on one side
    expect(rules([-0.1, 0.2, 0.3, 0.1, 0.4, 0.2, 0.5, 0.1, 0.3])).toEqual([[4, 8, 'above']]);
    // [pub: Western Electric Statistical Quality Control Handbook, 1956] 7 in a row is not a signal
    expect(rules([-0.1, 0.2, 0.3, 0.1, 0.4, 0.2, 0.5, 0.1, -0.3])).toEqual([]);
  });
});

describe('Welch t-test', () => {
  test('NIST example', () => {
    const r = welchT({ n: 249, mean: 20.14458, sd: 6.4147 }, { n: 79, mean: 30.48101, sd: 6.10771 });
    // [pub: NIST e-Handbook §1.3.5.3] t = −12.946
    expect(r.t).toBeCloseTo(-12.946, 3);
    // from memory: the same NIST example gives ν ≈ 136.87 degrees of freedom
    expect(r.df).toBeCloseTo(136.87, 1);
    // [pub: NIST e-Handbook §1.3.5.3] the difference is highly significant
    expect(r.pTwoSided).toBeLessThan(1e-20);
  });
});
