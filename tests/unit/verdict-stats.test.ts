/**
 * The statistics a lot verdict stands on: the LTPD a sample demonstrates, the prediction interval
 * against peer lots, and the Weibull fit with suspensions by maximum likelihood.
 */
import { jStat } from 'jstat';
import { demonstratedLtpd, weibullFit } from '../../shared/reliability';
import { predictionInterval } from '../../shared/stats';
import { mulberry32 } from '../../shared/random';

describe('demonstratedLtpd (exact binomial)', () => {
  test.each([
    // [REFERENCE.md A1, calc from the exact formula] n 100, 90 %, c 0..3 → 2.2763/3.8339/5.2345/6.5586 %
    [100, 0, 0.022763],
    [100, 1, 0.038339],
    [100, 2, 0.052345],
    [100, 3, 0.065586],
  ])('n %p, c %p, 90 %% → %p', (sampleSize, acceptNumber, expected) => {
    expect(demonstratedLtpd({ sampleSize, acceptNumber, confidence: 0.9 })).toBeCloseTo(expected, 6);
  });

  test('77 and 64 devices with c = 0 at 90 %', () => {
    // [REFERENCE.md A1; MIL-PRF-19500 LTPD table, from memory] n 77, c 0 → 2.95 %
    expect(demonstratedLtpd({ sampleSize: 77, acceptNumber: 0, confidence: 0.9 })).toBeCloseTo(0.0295, 4);
    // [REFERENCE.md A1] n 64, c 0 → 3.5 % (1 − 0.1^(1/64) = 3.534 %)
    expect(demonstratedLtpd({ sampleSize: 64, acceptNumber: 0, confidence: 0.9 })).toBeCloseTo(0.03534, 5);
  });

  test('agrees with jstat beta.inv and solves BinomCDF(c; n, p) = 1 − CL', () => {
    for (const [n, c] of [
      [45, 0],
      [116, 2],
      [231, 0],
      [30, 5],
    ]) {
      const p = demonstratedLtpd({ sampleSize: n, acceptNumber: c, confidence: 0.9 });
      // [jstat beta.inv] the one-sided Clopper–Pearson bound
      expect(p).toBeCloseTo(jStat.beta.inv(0.9, c + 1, n - c), 12);
      // [jstat binomial.cdf] definition of the demonstrated LTPD
      expect(jStat.binomial.cdf(c, n, p)).toBeCloseTo(0.1, 8);
    }
  });

  test('refuses an accept number at or above the sample size, or a bad confidence', () => {
    expect(() => demonstratedLtpd({ sampleSize: 5, acceptNumber: 5, confidence: 0.9 })).toThrow(RangeError);
    expect(() => demonstratedLtpd({ sampleSize: 5.5, acceptNumber: 0, confidence: 0.9 })).toThrow(RangeError);
    expect(() => demonstratedLtpd({ sampleSize: 50, acceptNumber: 0, confidence: 1 })).toThrow(RangeError);
  });
});

describe('predictionInterval', () => {
  test('hFE lot means at 95 %', () => {
    // [REFERENCE.md A2; Hahn & Meeker 1991, from memory] 112, 118, 115, 121 → x̄ 116.5, s 3.8730, t 3.1824 → [102.72, 130.28]
    const pi = predictionInterval({ values: [112, 118, 115, 121], confidence: 0.95 });
    expect(pi.mean).toBeCloseTo(116.5, 10);
    expect(pi.sd).toBeCloseTo(3.873, 3);
    expect(pi.t).toBeCloseTo(3.1824, 4);
    expect(pi.lower).toBeCloseTo(102.72, 2);
    expect(pi.upper).toBeCloseTo(130.28, 2);
  });

  test('VCE(sat) means at 99.73 %', () => {
    // [REFERENCE.md A2] 0.52, 0.55, 0.50 V at 99.73 %: t 19.206 → [−0.035, 1.081] V
    const pi = predictionInterval({ values: [0.52, 0.55, 0.5], confidence: 0.9973 });
    expect(pi.t).toBeCloseTo(19.206, 2);
    expect(pi.lower).toBeCloseTo(-0.035, 3);
    expect(pi.upper).toBeCloseTo(1.081, 3);
  });

  test('exact 99.73 % factor t·√(1 + 1/m)', () => {
    // [REFERENCE.md A2] 22.18 (m 3), 7.25 (5), 4.29 (10), 3.41 (25)
    for (const [m, factor] of [
      [3, 22.18],
      [5, 7.25],
      [10, 4.29],
      [25, 3.41],
    ]) {
      const values = Array.from({ length: m }, (_, i) => (i % 2 === 0 ? 1 : -1) * (1 + i));
      const pi = predictionInterval({ values, confidence: 0.9973 });
      expect((pi.upper - pi.mean) / pi.sd).toBeCloseTo(factor, 1);
    }
  });

  test('needs two values', () => {
    expect(() => predictionInterval({ values: [1], confidence: 0.95 })).toThrow(RangeError);
  });
});

describe('weibullFit by maximum likelihood with suspensions', () => {
  test('agrees with scipy on a censored sample', () => {
    const failures = [150, 340, 560, 800, 1130, 1720, 2470];
    const suspensions = [4000, 4000, 4000, 1500, 900];
    const fit = weibullFit(failures, suspensions, { method: 'mle' });
    // [scipy 1.17 stats.weibull_min.fit(CensoredData(uncensored, right), floc=0)] β 0.870799, η 3203.150
    expect(fit.beta).toBeCloseTo(0.870799, 4);
    expect(fit.eta).toBeCloseTo(3203.15, 0);
    expect(fit.failures).toBe(7);
    expect(fit.suspensions).toBe(5);
    expect(fit.method).toMatch(/maximum likelihood/);
  });

  test('agrees with scipy without suspensions', () => {
    // [scipy 1.17 stats.weibull_min.fit(x, floc=0)] β 1.344051, η 1118.288
    const fit = weibullFit([150, 340, 560, 800, 1130, 1720, 2470], [], { method: 'mle' });
    expect(fit.beta).toBeCloseTo(1.344051, 4);
    expect(fit.eta).toBeCloseTo(1118.288, 0);
  });

  test('recovers known parameters from generated censored data', () => {
    // common practice: simulate Weibull(β 2, η 1000), censor at 1200 h; with 2,000 units the MLE
    // has a standard error of about 2 % on β and 1 % on η, so ±6 % / ±3 % are 3σ bounds.
    const rand = mulberry32(19);
    const failures: number[] = [];
    const suspensions: number[] = [];
    for (let i = 0; i < 2000; i++) {
      const t = 1000 * Math.pow(-Math.log(1 - rand()), 1 / 2);
      if (t > 1200) suspensions.push(1200);
      else failures.push(t);
    }
    const fit = weibullFit(failures, suspensions, { method: 'mle' });
    expect(Math.abs(fit.beta - 2) / 2).toBeLessThan(0.06);
    expect(Math.abs(fit.eta - 1000) / 1000).toBeLessThan(0.03);
  });
});
