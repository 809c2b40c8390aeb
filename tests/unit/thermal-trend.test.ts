/**
 * The thermal path's trend rule (shared/thermal/trend.ts, rules in shared/thermal/rules.ts).
 * Sources beside each check value: scipy 1.17.1 (`scipy.stats.theilslopes(y, x, alpha=0.90,
 * method='joint')`, `scipy.stats.kendalltau(x, y, method='asymptotic')`) as the reference library for
 * Theil–Sen [pub: Sen 1968] and Kendall's S [pub: Mann 1945; Kendall]; jstat for the normal
 * distribution; generated series with a known true slope; flat noisy series for the false-alarm rate.
 */
import { jStat } from 'jstat';
import { initialRigState, stepRig } from '../../rig-simulator';
import { mulberry32 } from '../../shared/random';
import {
  THERMAL_PATH_RISE_FRACTION,
  TREND_ALPHA,
  TREND_HORIZON_H,
  TREND_INTERVAL_CONFIDENCE,
  TREND_MAX_EXTRAPOLATION,
  TREND_MAX_FITS,
  TREND_MIN_FITS,
  TREND_Z,
  SocketThermalTrack,
  ThermalTrendSeries,
  evaluateThermalTrend,
  mannKendall,
  standardNormalCdf,
  theilSen,
  type TrendPoint,
} from '../../shared/thermal';

const gaussian = (rand: () => number) => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());

// Series A: a slowly rising θ (no ties). Series B: ties in x and in y. Series C: falling.
const A = {
  x: [0, 1.5, 3, 4.5, 6, 7.5, 9, 10.5, 12, 13.5, 15, 16.5],
  y: [2.012, 1.998, 2.031, 2.027, 2.044, 2.036, 2.061, 2.049, 2.075, 2.068, 2.09, 2.081],
};
const B = { x: [0, 1, 2, 3, 3, 4, 5, 6, 7, 8, 9, 10], y: [5.0, 4.8, 5.1, 5.0, 4.9, 5.2, 5.0, 5.3, 4.8, 5.1, 5.2, 5.0] };
const C = { x: [0, 1, 2, 3, 4, 5, 6, 7, 8, 9], y: [3.1, 3.0, 3.05, 2.9, 2.95, 2.8, 2.85, 2.7, 2.75, 2.6] };

describe('constants', () => {
  it('TREND_Z is Φ⁻¹(1 − α) (jstat normal.inv) and the interval is two-sided 1 − 2α', () => {
    expect(TREND_Z).toBeCloseTo(jStat.normal.inv(1 - TREND_ALPHA, 0, 1), 12); // jstat
    expect(TREND_INTERVAL_CONFIDENCE).toBeCloseTo(0.9, 12);
  });

  it.each([-3, -1.6448536, -0.5, 0, 0.7, 1.6448536, 2.5, 3.7])('Φ(%p) agrees with jstat to 1e-7', (z) => {
    expect(Math.abs(standardNormalCdf(z) - jStat.normal.cdf(z, 0, 1))).toBeLessThan(1e-7); // jstat
  });
});

describe('Theil–Sen with Sen’s 90 % interval (reference: scipy.stats.theilslopes, alpha 0.90, method joint)', () => {
  it.each([
    // [name, series, slope, intercept, low, high] — scipy 1.17.1
    ['A rising', A, 0.00499999999999993, 2.0082500000000003, 0.0037037037037036904, 0.005666666666666659],
    ['B ties in x and y', B, 0.014285714285714362, 4.9714285714285715, -0.012499999999999956, 0.04999999999999997],
    ['C falling', C, -0.04999999999999999, 3.075, -0.06000000000000005, -0.041666666666666664],
  ])('%s', (_name, s, slope, intercept, low, high) => {
    const r = theilSen(s.x, s.y);
    expect(r.slope).toBeCloseTo(slope, 12);
    expect(r.intercept).toBeCloseTo(intercept, 12);
    expect(r.low).toBeCloseTo(low, 12);
    expect(r.high).toBeCloseTo(high, 12);
  });

  it('pairs with equal x are left out (B: 65 of 66 pairs — scipy counts the same)', () => {
    expect(theilSen(B.x, B.y).pairs).toBe(65);
  });
});

describe('Mann–Kendall (reference: scipy.stats.kendalltau, asymptotic; jstat for Φ)', () => {
  it.each([
    // [name, series, scipy τ, scipy two-sided asymptotic p (no continuity correction)]
    ['A rising', A, 0.8181818181818181, 0.00021313412412417887],
    ['C falling', C, -0.8222222222222221, 0.0009350263526396277],
  ])('%s: S = τ·n(n−1)/2 and Var(S) reproduce scipy’s p', (_name, s, tau, p) => {
    const mk = mannKendall(s.y);
    const n = s.y.length;
    expect(mk.s).toBe(Math.round((tau * n * (n - 1)) / 2)); // scipy τ (no ties: τ_b = τ_a)
    expect(mk.tau).toBeCloseTo(tau, 12);
    const zNoCorrection = mk.s / Math.sqrt(mk.varS);
    expect(2 * (1 - jStat.normal.cdf(Math.abs(zNoCorrection), 0, 1))).toBeCloseTo(p, 10); // scipy p via jstat Φ
    // Continuity-corrected one-sided p (Mann–Kendall as usually applied), through jstat.
    const zc = (mk.s - Math.sign(mk.s)) / Math.sqrt(mk.varS);
    expect(mk.z).toBeCloseTo(zc, 12);
    expect(mk.pRising).toBeCloseTo(1 - jStat.normal.cdf(zc, 0, 1), 7); // jstat
  });

  it('Var(S) without ties is n(n−1)(2n+5)/18, ties remove Σ t(t−1)(2t+5)/18 [pub: Kendall]', () => {
    expect(mannKendall(A.y).varS).toBeCloseTo((12 * 11 * 29) / 18, 10);
    // B's θ: 5.0 ×4, 4.8 ×2, 5.1 ×2, 5.2 ×2 → 156 + 3 × 18 = 210.
    expect(mannKendall(B.y).varS).toBeCloseTo((12 * 11 * 29 - 210) / 18, 10);
  });
});

/** n fits every `stepH` hours from θ0 rising `slope` per hour with Gaussian noise of sd `sd`. */
function series(seed: number, n: number, stepH: number, theta0: number, slope: number, sd: number): TrendPoint[] {
  const r = mulberry32(seed);
  return Array.from({ length: n }, (_, i) => ({ tH: i * stepH, thetaCPerW: theta0 + slope * i * stepH + sd * gaussian(r) }));
}

describe('generated data', () => {
  it('a known slope (0.004 °C/W per h, 1 % noise, 30 fits 2 h apart) is recovered within 25 % in every one of 200 seeds; the 90 % interval covers it in 85–95 %', () => {
    const trueSlope = 0.004;
    let covered = 0;
    let worst = 0;
    for (let seed = 1; seed <= 200; seed++) {
      const p = series(seed, 30, 2, 2, trueSlope, 0.02);
      const r = theilSen(
        p.map((q) => q.tH),
        p.map((q) => q.thetaCPerW),
      );
      worst = Math.max(worst, Math.abs(r.slope / trueSlope - 1));
      if (r.low <= trueSlope && trueSlope <= r.high) covered++;
    }
    // Least-squares SE of the slope is 0.02/√8990 h = 2.1e-4 (5 %); 25 % is about 5 SE.
    expect(worst).toBeLessThan(0.25);
    expect(covered / 200).toBeGreaterThanOrEqual(0.85);
    expect(covered / 200).toBeLessThanOrEqual(0.95 + 0.03);
  });

  it('one look at a flat noisy series: Mann–Kendall rejects at about α (within 2 binomial SE over 200 seeds)', () => {
    let rejected = 0;
    for (let seed = 1001; seed <= 1200; seed++) {
      const p = series(seed, 20, 1, 2, 0, 0.02);
      if (mannKendall(p.map((q) => q.thetaCPerW)).pRising < TREND_ALPHA) rejected++;
    }
    expect(rejected / 200).toBeLessThanOrEqual(TREND_ALPHA + 2 * Math.sqrt((TREND_ALPHA * (1 - TREND_ALPHA)) / 200));
  });

  it('the whole rule over a run of a flat socket (200 fits, thinned, evaluated at every point): raised in fewer than α of 200 seeds', () => {
    let raised = 0;
    for (let seed = 2001; seed <= 2200; seed++) {
      const s = new ThermalTrendSeries();
      const p = series(seed, 200, 0.5, 2, 0, 0.02);
      let ever = false;
      for (const q of p) {
        s.offer(q, 0.4, 2, null);
        ever ||= s.active;
      }
      if (ever) raised++;
    }
    expect(raised / 200).toBeLessThan(TREND_ALPHA);
  });
});

describe('the rule', () => {
  it('needs TREND_MIN_FITS fits and a baseline', () => {
    const p = series(7, TREND_MIN_FITS, 1, 2, 0.01, 0.005);
    expect(evaluateThermalTrend(p.slice(1), 2)).toBeNull();
    expect(evaluateThermalTrend(p, 0)).toBeNull();
    expect(evaluateThermalTrend(p, 2)).not.toBeNull();
  });

  it('a slow rise (2 °C/W + 0.002 per h, 0.5 % noise, 40 fits over 78 h) fires: reaches +25 % within 4 × its span, long before the step rule', () => {
    const p = series(11, 40, 2, 2, 0.002, 0.01);
    const t = evaluateThermalTrend(p, 2)!;
    expect(t.significant).toBe(true);
    expect(t.limitThetaCPerW).toBeCloseTo(2 * (1 + THERMAL_PATH_RISE_FRACTION), 12);
    // True line: 2.156 at 78 h, limit 2.5 → (2.5 − 2.156)/0.002 = 172 h; horizon min(500, 4 × 78 h).
    expect(t.horizonH).toBeCloseTo(Math.min(TREND_HORIZON_H, TREND_MAX_EXTRAPOLATION * 78), 9);
    expect(t.hoursToLimit!).toBeGreaterThan(172 * 0.8);
    expect(t.hoursToLimit!).toBeLessThan(172 * 1.2);
    expect(t.fires).toBe(true);
    // The newest θ is still far below the step rule's line.
    expect(p[p.length - 1].thetaCPerW / 2 - 1).toBeLessThan(THERMAL_PATH_RISE_FRACTION / 2);
    // The run ends in 100 h: the line is reached after it, so the rule stays quiet.
    expect(evaluateThermalTrend(p, 2, 100)!.fires).toBe(false);
  });

  it('a significant but slow rise that would take beyond the horizon does not fire', () => {
    const p = series(12, 40, 2, 2, 0.0003, 0.002); // 0.5 h of rise per 1000 h: +25 % after ~1500 h
    const t = evaluateThermalTrend(p, 2)!;
    expect(t.significant).toBe(true);
    expect(t.hoursToLimit!).toBeGreaterThan(t.horizonH);
    expect(t.fires).toBe(false);
  });

  it('the series: overlapping windows are skipped, > TREND_MAX_FITS thins to every other point keeping the newest', () => {
    const s = new ThermalTrendSeries();
    expect(s.offer({ tH: 0, thetaCPerW: 2 }, 0.5, 2, null)).toBe(true); // joined, too few to evaluate
    expect(s.latest).toBeNull();
    expect(s.offer({ tH: 0.3, thetaCPerW: 2 }, 0.5, 2, null)).toBe(false); // its window overlaps the first point's
    expect(s.points).toHaveLength(1);
    for (let i = 1; i <= TREND_MAX_FITS; i++) s.offer({ tH: i, thetaCPerW: 2 + i * 1e-3 }, 0.5, 2, null);
    expect(s.points).toHaveLength(TREND_MAX_FITS / 2 + 1);
    expect(s.points[s.points.length - 1].tH).toBe(TREND_MAX_FITS);
    expect(s.points[0].tH).toBe(0);
    // Spacing is now 2 h: a point 1 h after the newest is skipped, 2 h after joins.
    s.offer({ tH: TREND_MAX_FITS + 1, thetaCPerW: 2.1 }, 0.5, 2, null);
    expect(s.points[s.points.length - 1].tH).toBe(TREND_MAX_FITS);
    s.offer({ tH: TREND_MAX_FITS + 2, thetaCPerW: 2.1 }, 0.5, 2, null);
    expect(s.points[s.points.length - 1].tH).toBe(TREND_MAX_FITS + 2);
  });

  it('raised after two firing evaluations in a row, cleared after two quiet ones', () => {
    const s = new ThermalTrendSeries();
    const rising = series(21, 14, 1, 2, 0.02, 0.002);
    const states = rising.map((q) => (s.offer(q, 0.5, 2, null), s.active));
    // Evaluations start at the 10th point; raised at the 11th.
    expect(states.slice(0, 10)).toEqual(Array(10).fill(false));
    expect(states[10]).toBe(true);
    // Reseated: θ back at 2 and flat — the quiet evaluations clear it once the trend is gone.
    for (let i = 0; i < 60; i++) s.offer({ tH: 14 + i, thetaCPerW: 2 + 0.002 * gaussian(mulberry32(i)) }, 0.5, 2, null);
    expect(s.active).toBe(false);
  });
});

describe('the demo’s drying pad on the simulator’s physics (scripts/demo-fleet.ts: OV-03, 25 °C, 20 V at 96 mA, 72 stress s per sample, 0.2 K / 0.5 % noise)', () => {
  /** Stress hours at which each rule first raised the flag for socket 2 with the pad drying at `rate` °C/W per h. */
  function firstFlags(rate: number): { trendH: number | null; stepH: number | null; pointsAtStep: number } {
    let st = initialRigState({
      rigCode: 'OV-03',
      brokerUrl: 'mqtt://unused',
      username: 'unused',
      password: 'unused',
      sockets: 3,
      mode: 'powered',
      lots: ['HPD-L2403'],
      chamberC: 25,
      setpointC: 25,
      biasOn: true,
      vV: 20,
      icA: 0.096,
      faults: { dryingPad: { sockets: [2], startCPerW: 2, rampCPerWPerH: rate, maxCPerW: 60 } },
    });
    const track = new SocketThermalTrack();
    const r = mulberry32(3);
    let trendH: number | null = null;
    let stepH: number | null = null;
    let pointsAtStep = 0;
    for (let k = 0; k < 5000 && stepH === null; k++) {
      st = stepRig(st, 72);
      const s = st.sockets[2];
      const e = track.push({
        tS: st.stressClockS,
        caseC: s.caseC + 0.2 * gaussian(r),
        ambientC: st.chamberC,
        powerW: Math.abs(s.vOutV * s.iA * (1 + 0.005 * gaussian(r))),
        biasOn: s.biasOn && !s.tripped,
      });
      if (e?.flag === 'raise' && e.rule === 'trend' && trendH === null) trendH = st.stressClockS / 3600;
      if (e?.flag === 'raise' && e.rule === 'step') {
        stepH = st.stressClockS / 3600;
        pointsAtStep = track.trend.points.length;
      }
    }
    return { trendH, stepH, pointsAtStep };
  }

  it('at the demo’s 0.5 °C/W per h the step rule fires first (~1.6 h): the trend has fewer than TREND_MIN_FITS spaced fits by then', () => {
    const f = firstFlags(0.5);
    expect(f.trendH).toBeNull();
    expect(f.stepH!).toBeLessThan(3);
    expect(f.pointsAtStep).toBeLessThan(TREND_MIN_FITS);
  });

  it('a pad drying 25 × slower (0.02 °C/W per h): the trend rule fires hours before the step rule', () => {
    const f = firstFlags(0.02);
    expect(f.trendH).not.toBeNull();
    expect(f.trendH!).toBeLessThan(f.stepH! / 2);
  });
});
