import { criticalAmbientFor, gainAtTemperature } from '../../../shared/physics';
import {
  SocketTrend,
  assessSocket,
  assessTrend,
  judgeTrend,
  projectSecondsToLimit,
  type SocketAssessment,
  type SocketSample,
} from '../../../shared/safety';
import { mulberry32 } from '../../../shared/random';

function gaussian(rand: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

interface Sim {
  /** Chamber (ambient) temperature over stress-clock time. */
  ambientC: (tS: number) => number;
  thetaJc: number;
  thetaCa: number;
  tauS: number;
  vV: number;
  /** Collector current at a junction temperature (forced base current: β(Tj)·IB). */
  currentAt: (tjC: number) => number;
  biasOn: (tS: number) => boolean;
  sampleS: number;
  durationS: number;
  /** σ of case noise (°C) and relative σ of current noise. */
  caseNoiseC: number;
  currentNoise: number;
  seed: number;
}

/**
 * Single-node thermal model: τ·dTj/dt = Ta + θ·V·I(Tj) − Tj (θ = θjc + θca), the dynamics whose
 * steady state thermalOperatingPoint solves; case = Tj − θjc·P. Euler steps of 0.05 s.
 */
function simulate(sim: Sim): { samples: SocketSample[]; trueTj: number[] } {
  const rand = mulberry32(sim.seed);
  const n = gaussian(rand);
  const theta = sim.thetaJc + sim.thetaCa;
  const dt = 0.05;
  let tj = sim.ambientC(0);
  const samples: SocketSample[] = [];
  const trueTj: number[] = [];
  const stepsPerSample = Math.round(sim.sampleS / dt);
  for (let k = 0; k * sim.sampleS <= sim.durationS; k++) {
    const tS = k * sim.sampleS;
    const on = sim.biasOn(tS);
    const i = on ? sim.currentAt(tj) : 0;
    const p = sim.vV * i;
    samples.push({
      tS,
      caseC: tj - sim.thetaJc * p + sim.caseNoiseC * n(),
      vV: on ? sim.vV : 0,
      iA: i * (1 + sim.currentNoise * n()),
      chamberC: sim.ambientC(tS) + 0.1 * n(),
      biasOn: on,
    });
    trueTj.push(tj);
    for (let s = 0; s < stepsPerSample; s++) {
      const t = tS + s * dt;
      const pp = sim.biasOn(t) ? sim.vV * sim.currentAt(tj) : 0;
      tj += (dt * (sim.ambientC(t) + theta * pp - tj)) / sim.tauS;
      if (tj > 1000) tj = 1000;
    }
  }
  return { samples, trueTj };
}

/** Run the detector on every sample as the server would, with a bounded buffer. */
function runDetector(samples: SocketSample[], dev: { tjMaxC: number; thetaJcCPerW: number }) {
  const results: SocketAssessment[] = [];
  for (let k = 0; k < samples.length; k++) {
    results.push(assessSocket(samples.slice(Math.max(0, k - 400), k + 1), dev));
  }
  return results;
}

const forcedIb =
  (ibA: number, xtb = 1.5) =>
  (tj: number) =>
    ibA * gainAtTemperature({ betaRef: 100, tRefC: 25, tC: tj, xtb });
const dev = { tjMaxC: 150, thetaJcCPerW: 5 };

describe('projection', () => {
  test('linear, settling and accelerating cases', () => {
    // common practice: constant slope 0.1 °C/s covers 30 °C in 300 s
    expect(projectSecondsToLimit(30, 0.1, 0)).toBeCloseTo(300, 10);
    // common practice: first-order approach Ṫ = 0.1, T̈ = −0.01 (τ 10 s) levels off 1 °C higher: never reaches 30 °C
    expect(projectSecondsToLimit(30, 0.1, -0.01)).toBeNull();
    // common practice: exponential growth λ = 0.01/s: 30 °C after ln(1 + 0.01·30/0.1)/0.01 = 138.6 s
    expect(projectSecondsToLimit(30, 0.1, 0.001)).toBeCloseTo(Math.log(4) / 0.01, 6);
    // common practice: not rising → no projection
    expect(projectSecondsToLimit(30, -0.1, 0)).toBeNull();
  });
});

describe('live runaway detector', () => {
  test('empty history and the plain temperature threshold', () => {
    expect(assessSocket([], dev).action).toBe('none');
    const s: SocketSample = { tS: 0, caseC: 135, vV: 10, iA: 0.1, chamberC: 125, biasOn: true };
    const r = assessSocket([s], dev);
    // [pub: JEDEC JESD51 definitions] Tj = 135 + 5 × 10 × 0.1 = 140 °C
    expect(r.tjC).toBeCloseTo(140, 10);
    // Changed with issue #20 item 4: being within 10 °C of Tj max is no longer a trip by itself (a
    // single sample shows no climb and no feedback); the hard limit is unchanged.
    expect(r.action).toBe('none');
    // [pub: JEDEC JESD51 definitions] Tj = 145 + 5 × 10 × 0.1 = 150 °C: the rating itself trips
    expect(assessSocket([{ ...s, caseC: 145 }], dev).action).toBe('trip');
    expect(assessSocket([{ ...s, caseC: 144.9 }], dev).action).toBe('none');
  });

  test('a junction held near its rating by the stress itself is not a runaway (regression: the demo HTRB board tripped every socket)', () => {
    // common practice: HTRB holds the junction near Tj max (chamber 145 °C on a 150 °C part) with
    // negligible self-heating (160 V × 60 nA ≈ 10 µW); the margin rule must not fire on that alone.
    const htrb: SocketSample[] = Array.from({ length: 40 }, (_, k) => ({
      tS: k * 5,
      caseC: 145 + 0.05 * Math.sin(k),
      vV: 160,
      iA: 60e-9,
      chamberC: 145,
      biasOn: true,
    }));
    expect(
      runDetector(htrb, dev)
        .map((r) => r.action)
        .filter((a) => a !== 'none'),
    ).toEqual([]);
    // A powered-life board whose peers all run at 141 °C: a socket at 141.5 °C is one of them …
    const s: SocketSample = { tS: 0, caseC: 131.5, vV: 10, iA: 0.2, chamberC: 25, biasOn: true };
    expect(assessSocket([s], dev, { baselineTjC: 141 }).action).toBe('none');
    // … and one 4 °C above its peers at a steady temperature is spread, not runaway (changed with
    // issue #20 item 4: the peer rule alone tripped 16–31 % of healthy sockets at rating).
    const steadyHot = Array.from({ length: 40 }, (_, k) => ({ ...s, tS: k * 5, caseC: 135 + 0.05 * Math.sin(k) }));
    expect(runDetector(steadyHot, dev).filter((r) => r.action !== 'none')).toEqual([]);
    expect(assessSocket(steadyHot, dev, { baselineTjC: 141 }).action).toBe('none');
    // At the rating itself it trips whatever its peers do.
    expect(assessSocket([{ ...s, caseC: 140 }], dev, { baselineTjC: 150 }).action).toBe('trip');
  });

  test('healthy noisy socket whose junction settles is never tripped over a long run', () => {
    const { samples, trueTj } = simulate({
      // chamber ramps 25 → 125 °C in 30 min with bias on, then holds; bias off for 10 min twice
      ambientC: (t) => Math.min(125, 25 + (100 * t) / 1800),
      thetaJc: 5,
      thetaCa: 35,
      tauS: 90,
      vV: 10,
      currentAt: forcedIb(0.15e-3),
      biasOn: (t) => !(t >= 3 * 3600 && t < 3 * 3600 + 600) && !(t >= 5 * 3600 && t < 5 * 3600 + 600),
      sampleS: 5,
      durationS: 8 * 3600,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed: 20240611,
    });
    // sanity of the synthetic trace: settles near 135 °C, below Tj max − 10 °C
    expect(Math.max(...trueTj)).toBeLessThan(136);
    expect(trueTj[trueTj.length - 1]).toBeGreaterThan(133);
    const results = runDetector(samples, dev);
    const trips = results.filter((r) => r.action === 'trip');
    // common practice: a junction settling below the trip level is not tripped despite ±0.3 °C / ±1 % noise
    expect(trips).toEqual([]);
    // [pub: textbook thermal-stability criterion] the loop gain, when resolvable, stays well below 1
    // (true value θ·P·XTB/T ≈ 40 × 0.24 × 1.5 / 408 ≈ 0.035)
    const gains = results.map((r) => r.loopGain).filter((g): g is number => g !== null);
    expect(Math.max(...gains, 0)).toBeLessThan(0.5);
  });

  test.each([
    { seed: 11, tauS: 20 },
    { seed: 12, tauS: 30 },
    { seed: 13, tauS: 60 },
  ])('healthy socket near the trip level, bias cycled (seed $seed, τ $tauS s), is never tripped', ({ seed, tauS }) => {
    const { samples, trueTj } = simulate({
      ambientC: () => 125,
      thetaJc: 5,
      thetaCa: 35,
      tauS,
      vV: 10,
      currentAt: forcedIb(0.18e-3),
      biasOn: (t) => t >= 300 && !(t >= 3000 && t < 3300),
      sampleS: 2,
      durationS: 2 * 3600,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed,
    });
    // the synthetic junction settles about 3.4 °C under the trip level (140 °C)
    expect(Math.max(...trueTj)).toBeGreaterThan(136);
    expect(Math.max(...trueTj)).toBeLessThan(137);
    // common practice: a junction settling below the trip level is not tripped, including each bias-on step
    expect(runDetector(samples, dev).filter((r) => r.action === 'trip')).toEqual([]);
  });

  test('forced-base runaway (gain law, no steady state below Tj max) is tripped before Tj max', () => {
    const { samples, trueTj } = simulate({
      ambientC: () => 110,
      thetaJc: 1,
      thetaCa: 39,
      tauS: 120,
      vV: 10,
      currentAt: forcedIb(0.6e-3),
      biasOn: (t) => t >= 120,
      sampleS: 2,
      durationS: 3600,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed: 7,
    });
    const results = runDetector(samples, { tjMaxC: 150, thetaJcCPerW: 1 });
    const k = results.findIndex((r) => r.action === 'trip');
    const reach = trueTj.findIndex((t) => t >= 150);
    // the uncontrolled trace does reach Tj max
    expect(reach).toBeGreaterThan(0);
    expect(k).toBeGreaterThan(0);
    // [pub: textbook thermal-stability criterion] tripped while the junction is still below Tj max, at least 30 s ahead
    expect(trueTj[k]).toBeLessThan(150);
    expect(samples[reach].tS - samples[k].tS).toBeGreaterThanOrEqual(30);
  });

  test('slow runaway (loop gain just above 1) is tripped early, before the temperature threshold', () => {
    // linear gain β = 100·(1 + a(T − 25)), forced IB: loop gain θ·V·IB·100·a = 40 × 10 × 0.5 mA × 100 × 0.055 = 1.1
    const a = 0.055;
    const { samples, trueTj } = simulate({
      ambientC: () => 60,
      thetaJc: 5,
      thetaCa: 35,
      tauS: 120,
      vV: 10,
      currentAt: (tj) => 0.5e-3 * 100 * (1 + a * (tj - 25)),
      biasOn: (t) => t >= 60,
      sampleS: 2,
      durationS: 1800,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed: 99,
    });
    const results = runDetector(samples, dev);
    const k = results.findIndex((r) => r.action === 'trip');
    expect(k).toBeGreaterThan(0);
    // [pub: textbook thermal-stability criterion] K·a ≥ 1 → runaway; caught below Tj max − margin (140 °C)
    expect(trueTj[k]).toBeLessThan(140);
    expect(results[k].reason).toMatch(/loop gain|projected/);
    // the uncontrolled trace does reach Tj max, later
    expect(trueTj.findIndex((t) => t >= 150)).toBeGreaterThan(k);
  });

  test('quasi-static runaway as the chamber drifts past the critical ambient trips on loop gain', () => {
    // forced IB with collector leakage: IC = β·IB + (β + 1)·ICBO(T), ICBO 1 µA at 25 °C doubling every 10 °C
    const currentAt = (tj: number) => 100 * 0.1e-3 + 101 * 1e-6 * Math.pow(2, (tj - 25) / 10);
    const crit = criticalAmbientFor({ thetaCPerW: 40, powerAt: (t) => 20 * currentAt(t) });
    const { samples, trueTj } = simulate({
      ambientC: (t) => 25 + (0.5 * t) / 60,
      thetaJc: 5,
      thetaCa: 35,
      tauS: 60,
      vV: 20,
      currentAt,
      biasOn: () => true,
      sampleS: 2,
      durationS: 7200,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed: 5,
    });
    const results = runDetector(samples, dev);
    const k = results.findIndex((r) => r.action === 'trip');
    const reach = trueTj.findIndex((t) => t >= 150);
    expect(k).toBeGreaterThan(0);
    // [pub: textbook thermal-stability criterion] the estimated loop gain reaches 1 while Tj rises
    expect(results[k].reason).toMatch(/loop gain/);
    expect(results[k].loopGain!).toBeGreaterThanOrEqual(1);
    // [pub: textbook thermal-stability criterion] not before the chamber nears the critical ambient (no early alarm) …
    expect(samples[k].chamberC).toBeGreaterThan(crit - 5);
    // … and at least a minute before the junction reaches Tj max
    expect(reach).toBeGreaterThan(k);
    expect(samples[reach].tS - samples[k].tS).toBeGreaterThanOrEqual(60);
    expect(trueTj[k]).toBeLessThan(140);
  });
});

describe('judgeTrend (what live protection calls per sample) decides as assessTrend does', () => {
  test('a runaway and a sound socket judged in turn: same action every sample, no numbers carried over between them', () => {
    const hot = simulate({
      ambientC: () => 110,
      thetaJc: 1,
      thetaCa: 39,
      tauS: 120,
      vV: 10,
      currentAt: forcedIb(0.6e-3),
      biasOn: (t) => t >= 120,
      sampleS: 2,
      durationS: 2400,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed: 7,
    });
    const calm = simulate({
      ambientC: () => 110,
      thetaJc: 1,
      thetaCa: 20,
      tauS: 120,
      vV: 10,
      currentAt: () => 0.05,
      biasOn: (t) => t >= 120,
      sampleS: 2,
      durationS: 2400,
      caseNoiseC: 0.3,
      currentNoise: 0.01,
      seed: 8,
    });
    const device = { tjMaxC: 150, thetaJcCPerW: 1 };
    const a = new SocketTrend(300, 600);
    const b = new SocketTrend(300, 600);
    const seen = new Set<string>();
    for (let k = 0; k < hot.samples.length; k++) {
      a.push(hot.samples[k], device.thetaJcCPerW);
      b.push(calm.samples[k], device.thetaJcCPerW);
      const actionA = judgeTrend(a, device);
      const actionB = judgeTrend(b, device);
      const fullA = assessTrend(a, device);
      expect(actionA).toBe(fullA.action);
      // B's full assessment after A's: the scratch judgeTrend fills is not read across sockets.
      const fullB = assessTrend(b, device);
      expect(actionB).toBe(fullB.action);
      expect(fullB.tjC).toBeCloseTo(
        calm.samples[k].caseC + (calm.samples[k].biasOn ? device.thetaJcCPerW * calm.samples[k].vV * calm.samples[k].iA : 0),
        9,
      );
      seen.add(actionA);
      if (actionA === 'trip') break;
    }
    // The runaway trace passes through none → warn → trip, so every branch was compared.
    expect([...seen].sort()).toEqual(['none', 'trip', 'warn']);
  });
});
