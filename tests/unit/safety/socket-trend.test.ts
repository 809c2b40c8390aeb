/**
 * The incremental window of live protection (shared/safety/socket-trend.ts) against batch fits of
 * the same samples by general-purpose libraries:
 * - the quadratic trend of Tj against time: jStat.models.ols (jstat 1.9.6) with regressors
 *   1, x, x² (x = t − t_last), coefficients and standard errors (σ̂²(XᵀX)⁻¹);
 * - the line of power on case temperature: simple-statistics linearRegression (7.12.1);
 * - θca through the origin and the case span: direct sums over the window.
 * Streams exercise what the running sums must survive: the window sliding for thousands of samples
 * (add/subtract and re-anchoring), bias-off gaps, a clock that jumps back, and a change of θjc.
 */
import { jStat } from 'jstat';
import { linearRegression } from 'simple-statistics';
import { SocketTrend, type TrendSample } from '../../../shared/safety/socket-trend';
import { mulberry32 } from '../../../shared/random';

/** The window assessSocket defines: the latest continuous bias-on stretch within windowS, at most maxSamples. */
function batchWindow(history: TrendSample[], windowS: number, maxSamples: number): TrendSample[] {
  const last = history[history.length - 1];
  let start = history.length;
  while (start > 0 && history[start - 1].biasOn && history[start - 1].tS >= last.tS - windowS && history.length - start < maxSamples)
    start--;
  return history.slice(start);
}

function expectClose(actual: number, expected: number, rel: number, label: string): void {
  const tol = rel * Math.max(1, Math.abs(expected));
  if (!(Math.abs(actual - expected) <= tol)) throw new Error(`${label}: ${actual} vs reference ${expected} (tolerance ${tol})`);
}

function checkAgainstReference(
  trend: SocketTrend,
  history: TrendSample[],
  thetaJc: number,
  windowS: number,
  maxSamples: number,
  label: string,
): number {
  const w = batchWindow(history, windowS, maxSamples);
  expect(trend.count).toBe(w.length);
  if (w.length < 6) return 0;
  const last = w[w.length - 1];
  const xs = w.map((s) => s.tS - last.tS);
  const tj = w.map((s) => s.caseC + thetaJc * s.vV * s.iA);
  const ols = jStat.models.ols(
    tj,
    xs.map((x) => [1, x, x * x]),
  );
  const fit = trend.quadraticFit();
  expect(fit).not.toBeNull();
  expectClose(fit!.c0, ols.coef[0], 1e-7, `${label} c0`);
  expectClose(fit!.slope, ols.coef[1], 1e-6, `${label} slope`);
  expectClose(fit!.accel, 2 * ols.coef[2], 1e-6, `${label} accel`);
  expectClose(fit!.slopeSe, ols.t.se[1], 1e-5, `${label} slope se`);
  expectClose(fit!.accelSe, 2 * ols.t.se[2], 1e-5, `${label} accel se`);

  const r = trend.caseRegression();
  const p = w.map((s) => s.vV * s.iA);
  const cases = w.map((s) => s.caseC);
  const line = linearRegression(cases.map((c, i) => [c, p[i]]));
  expectClose(r.slope, line.m, 1e-6, `${label} dP/dTcase`);
  const rss = cases.reduce((acc, c, i) => acc + (p[i] - (line.b + line.m * c)) ** 2, 0);
  expectClose(r.rss, rss, 1e-6, `${label} rss`);
  const sumP2 = p.reduce((a, x) => a + x * x, 0);
  const sumRiseP = w.reduce((a, s, i) => a + (s.caseC - s.chamberC) * p[i], 0);
  expectClose(r.sumRiseP / r.sumP2, sumRiseP / sumP2, 1e-9, `${label} θca`);
  expectClose(r.caseSpanC, Math.max(...cases) - Math.min(...cases), 1e-12, `${label} case span`);
  return 1;
}

describe('SocketTrend (incremental) equals batch least squares (jStat OLS, simple-statistics)', () => {
  test('a noiseless quadratic is recovered exactly: slope and curvature at the latest sample', () => {
    const trend = new SocketTrend(300);
    // Tj(t) = 80 + 0.02·(t − 1000) + 1e-4·(t − 1000)²; case = Tj − θjc·P with P = 10 V × 0.1 A.
    const tjOf = (t: number) => 80 + 0.02 * (t - 1000) + 1e-4 * (t - 1000) ** 2;
    for (let t = 1000; t <= 1600; t += 2) trend.push({ tS: t, caseC: tjOf(t) - 1.5 * 1, vV: 10, iA: 0.1, chamberC: 60, biasOn: true }, 1.5);
    const fit = trend.quadraticFit()!;
    // d/dt at t = 1600: 0.02 + 2e-4·600 = 0.14 °C/s; d²/dt² = 2e-4.
    expectClose(fit.slope, 0.14, 1e-9, 'slope');
    expectClose(fit.accel, 2e-4, 1e-7, 'accel');
    expectClose(fit.c0, tjOf(1600), 1e-9, 'Tj at latest');
    expect(fit.slopeSe).toBeLessThan(1e-6);
    expect(trend.count).toBe(151); // 1300…1600 s every 2 s (window inclusive of its edge)
  });

  test('sliding for 5,000 samples with noise, bias gaps, a clock reset and a θjc change', () => {
    const rand = mulberry32(2026);
    const windowS = 300;
    const maxSamples = 600;
    const trend = new SocketTrend(windowS, maxSamples);
    let history: TrendSample[] = [];
    let t = 3.6e6; // a thousand stress hours in: large absolute times must not hurt the fit
    let thetaJc = 1.5;
    let checked = 0;
    for (let k = 0; k < 5000; k++) {
      t += 0.5 + rand() * 2;
      if (k === 3000) t = 10; // the rig's clock started again
      if (k === 4000) thetaJc = 2.2; // another device in the socket map
      const biasOn = !(k % 1300 > 1290);
      const tj = 90 + 8 * Math.sin(t / 400) + 0.002 * (t % 700);
      const i = 0.08 + 0.02 * Math.sin(t / 250) + 0.001 * (rand() - 0.5);
      const s: TrendSample = {
        tS: t,
        caseC: tj - thetaJc * 20 * i + 0.2 * (rand() - 0.5),
        vV: 20,
        iA: i,
        chamberC: 70 + 0.1 * (rand() - 0.5),
        biasOn,
      };
      trend.push(s, thetaJc);
      if (k === 3000) history = [];
      history.push(s);
      if (!biasOn) history = [s];
      if (k % 37 === 0 || k === 4000 || k === 4999)
        checked += checkAgainstReference(trend, history, thetaJc, windowS, maxSamples, `sample ${k}`);
    }
    expect(checked).toBeGreaterThan(100);
  });

  test('dense telemetry: maxSamples bounds the window before windowS does', () => {
    const trend = new SocketTrend(300, 50);
    const history: TrendSample[] = [];
    for (let k = 0; k < 400; k++) {
      const s: TrendSample = {
        tS: k * 0.25,
        caseC: 100 + 0.01 * k + 0.05 * Math.cos(k),
        vV: 15,
        iA: 0.05 + 1e-5 * k,
        chamberC: 85,
        biasOn: true,
      };
      trend.push(s, 2);
      history.push(s);
    }
    expect(trend.count).toBe(50);
    expect(checkAgainstReference(trend, history, 2, 300, 50, 'dense')).toBe(1);
  });

  test('a long window grows its ring buffer past the initial 512 samples without losing any', () => {
    const trend = new SocketTrend(3000, 2000);
    const history: TrendSample[] = [];
    for (let k = 0; k < 1500; k++) {
      const s: TrendSample = {
        tS: 1e5 + k,
        caseC: 110 + 3 * Math.sin(k / 90) + 0.02 * Math.cos(7 * k),
        vV: 12,
        iA: 0.2 + 0.01 * Math.sin(k / 60),
        chamberC: 100,
        biasOn: true,
      };
      trend.push(s, 1.2);
      history.push(s);
      if (k === 511 || k === 512 || k === 1499) expect(checkAgainstReference(trend, history, 1.2, 3000, 2000, `grow ${k}`)).toBe(1);
    }
    expect(trend.count).toBe(1500);
  });

  test('renumbering the absolute sample indices (every 2³⁰ samples) changes no result', () => {
    // Renumbering at 700 here instead: the window is full and both case deques hold entries then.
    const renumbered = new SocketTrend(300, 600, 700);
    const plain = new SocketTrend(300, 600);
    const history: TrendSample[] = [];
    const rand = mulberry32(7);
    for (let k = 0; k < 3000; k++) {
      const s: TrendSample = {
        tS: k,
        caseC: 105 + 4 * Math.sin(k / 70) + 0.3 * rand(),
        vV: 18,
        iA: 0.1 + 0.005 * Math.cos(k / 40),
        chamberC: 90,
        biasOn: true,
      };
      renumbered.push(s, 1.7);
      plain.push(s, 1.7);
      history.push(s);
      if (k % 97 === 0 || k === 699 || k === 700 || k === 701) {
        expect(renumbered.caseRegression()).toEqual(plain.caseRegression());
        expect(renumbered.quadraticFit()).toEqual(plain.quadraticFit());
        expect(renumbered.spanS).toBe(plain.spanS);
      }
    }
    expect(checkAgainstReference(renumbered, history, 1.7, 300, 600, 'renumbered')).toBe(1);
  });

  test('a bias-off sample ends the stretch; reset forgets the latest sample', () => {
    const trend = new SocketTrend(300);
    for (let k = 0; k < 20; k++) trend.push({ tS: k, caseC: 100, vV: 10, iA: 0.1, chamberC: 90, biasOn: true }, 1);
    expect(trend.count).toBe(20);
    expect(trend.lastTjC).toBeCloseTo(101, 12);
    trend.push({ tS: 20, caseC: 95, vV: 0, iA: 0, chamberC: 90, biasOn: false }, 1);
    expect(trend.count).toBe(0);
    expect(trend.lastTjC).toBe(95);
    expect(trend.quadraticFit()).toBeNull();
    trend.reset();
    expect(trend.hasLast).toBe(false);
    expect(Number.isNaN(trend.lastChamberC)).toBe(true);
  });
});
