/**
 * Socket thermal identification (shared/thermal). Sources beside each check value:
 * REFERENCE.md A7 ([calc] values of the Foster sum, JESD51-14's Zth(t) = ΣRi(1 − e^{−t/τi})),
 * generated data with known θ and τ (recovered within 10 %), and the simulator's own physics.
 */
import {
  DEFAULT_TRACK_OPTIONS,
  SocketThermalTrack,
  THERMAL_PATH_RISE_FRACTION,
  fitStepResponse,
  identifySocketThermal,
  protectionThetaCa,
  zthFoster,
  type ThermalSample,
} from '../../shared/thermal';
import { mulberry32 } from '../../shared/random';
import { createRigState, stepRig, makeLotDevices, DEMO_LOTS, type RigState } from '../../rig-simulator';

const gaussian = (rand: () => number) => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());

describe('Foster network Zth(t) (REFERENCE A7)', () => {
  // [calc] R 0.3/0.9/2.0 K/W, τ 1 ms/30 ms/1 s (REFERENCE.md A7, computed with scipy from the A7 formula).
  const terms = [
    { rCPerW: 0.3, tauS: 0.001 },
    { rCPerW: 0.9, tauS: 0.03 },
    { rCPerW: 2.0, tauS: 1 },
  ];
  it.each([
    [0.001, 0.22114],
    [0.01, 0.57501],
    [0.1, 1.35822],
    [1, 2.46424],
    [10, 3.19991],
  ])('Zth(%p s) = %p K/W', (t, z) => {
    expect(zthFoster(terms, t)).toBeCloseTo(z, 5);
  });

  it('a single-term step on 60 log-spaced points with 0.5 % noise: R and τ within 1 % (A7 single-term case)', () => {
    // A7: "least squares on log-spaced t … curve_fit on 60 points, 0.5 % noise → within 1 % of R and τ".
    // Here its slowest term alone (R 2.0 K/W, τ 1 s), fitted by variable projection over log τ.
    const rand = mulberry32(7);
    const t = Array.from({ length: 60 }, (_, k) => 10 ** (-3 + (4 * k) / 59));
    const y = t.map((x) => zthFoster([{ rCPerW: 2, tauS: 1 }], x) * (1 + 0.005 * gaussian(rand)));
    const fit = fitStepResponse(t, y);
    expect(fit).not.toBeNull();
    expect(Math.abs(fit!.amplitude / 2 - 1)).toBeLessThan(0.01);
    expect(Math.abs(fit!.tauS / 1 - 1)).toBeLessThan(0.01);
    expect(fit!.r2).toBeGreaterThan(0.999);
  });

  it('noise-free single term: exact to 6 digits (generated)', () => {
    const t = Array.from({ length: 30 }, (_, k) => 10 ** (-2 + (3 * k) / 29));
    const fit = fitStepResponse(
      t,
      t.map((x) => 5 + 3.2 * (1 - Math.exp(-x / 0.4))),
      { fitOffset: true },
    );
    expect(fit!.amplitude).toBeCloseTo(3.2, 6);
    expect(fit!.tauS).toBeCloseTo(0.4, 6);
    expect(fit!.offset).toBeCloseTo(5, 6);
  });
});

/** A generated first-order socket: exact ZOH response to a power history, ambient drift and sensor noise. */
function generated(p: {
  theta: number;
  tau: number;
  h: number;
  n: number;
  power: (k: number) => number;
  offsetC?: number;
  noiseC?: number;
  seed?: number;
  driftCPerS?: number;
}): ThermalSample[] {
  const rand = mulberry32(p.seed ?? 1);
  const a = Math.exp(-p.h / p.tau);
  let rise = 0;
  const out: ThermalSample[] = [];
  for (let k = 0; k < p.n; k++) {
    const tS = k * p.h;
    const ambientC = 100 + (p.driftCPerS ?? 0) * tS;
    out.push({ tS, ambientC, powerW: p.power(k), caseC: ambientC + (p.offsetC ?? 0) + rise + (p.noiseC ?? 0) * gaussian(rand) });
    // The power held over the interval is the mean of its ends (as the identification assumes).
    const pAvg = (p.power(k) + p.power(k + 1)) / 2;
    rise = a * rise + (1 - a) * p.theta * pAvg;
  }
  return out;
}

describe('identifySocketThermal: ARX least squares (generated steps with known θ and τ)', () => {
  it('a bias-on step 0 → 8 W with 0.2 K noise and ambient drift: θ and τ within 10 %', () => {
    const s = generated({ theta: 2.5, tau: 120, h: 30, n: 40, power: (k) => (k === 0 ? 0 : 8), noiseC: 0.2, driftCPerS: 0.001, seed: 3 });
    const fit = identifySocketThermal(s, { offsetC: 0 });
    expect(fit.identifiable).toBe(true);
    expect(fit.method).toBe('arx');
    expect(Math.abs(fit.thetaCPerW! / 2.5 - 1)).toBeLessThan(0.1);
    expect(Math.abs(fit.tauS! / 120 - 1)).toBeLessThan(0.1);
    expect(fit.r2!).toBeGreaterThan(0.95);
    expect(fit.good).toBe(true);
  });

  it('ten noisy steps (seeds 1–10), a power step 4 → 9 W with an unknown 3 K offset fitted: all within 10 %', () => {
    for (let seed = 1; seed <= 10; seed++) {
      const s = generated({ theta: 4, tau: 200, h: 40, n: 40, power: (k) => (k < 5 ? 4 : 9), offsetC: 3, noiseC: 0.2, seed });
      // The socket starts from rest (rise 0 above its offset): the window holds the 4 W heat-up and the step.
      const fit = identifySocketThermal(s);
      expect(fit.identifiable).toBe(true);
      expect(Math.abs(fit.thetaCPerW! / 4 - 1)).toBeLessThan(0.1);
      expect(Math.abs(fit.tauS! / 200 - 1)).toBeLessThan(0.1);
      // The offset (a secondary result: c/(1 − a) magnifies noise) within 2 K of a 36 K rise (6 % of it).
      expect(Math.abs(fit.offsetC! - 3)).toBeLessThan(2);
    }
  });

  it('samples far apart against τ: θ from the steady state, τ honestly not resolved', () => {
    const s = generated({ theta: 2, tau: 120, h: 1800, n: 12, power: (k) => 8 + 0.1 * Math.sin(k), noiseC: 0.2, seed: 5 });
    const fit = identifySocketThermal(s.slice(1), { offsetC: 0 });
    expect(fit.identifiable).toBe(true);
    expect(fit.method).toBe('steady');
    expect(fit.tauS).toBeNull();
    expect(fit.tauNote).toMatch(/τ/);
    expect(Math.abs(fit.thetaCPerW! / 2 - 1)).toBeLessThan(0.1);
  });

  it('not identifiable: power too small, too few samples, one power level with the offset unknown; no good θ from a window far shorter than τ', () => {
    const tiny = generated({ theta: 2, tau: 120, h: 30, n: 30, power: () => 0.01, noiseC: 0.2 });
    expect(identifySocketThermal(tiny, { offsetC: 0 })).toMatchObject({ identifiable: false, thetaCPerW: null, good: false });
    expect(identifySocketThermal(tiny, { offsetC: 0 }).reason).toMatch(/too small/);
    const few = generated({ theta: 2, tau: 120, h: 30, n: 4, power: () => 8 });
    expect(identifySocketThermal(few, { offsetC: 0 }).reason).toMatch(/at least/);
    const flat = generated({ theta: 2, tau: 120, h: 30, n: 30, power: () => 8, offsetC: 2 });
    expect(identifySocketThermal(flat).reason).toMatch(/cannot be told apart/);
    // A heat-up far slower than the window: τ not identifiable, and no good θ either (the case is still climbing).
    const short = generated({ theta: 2, tau: 2000, h: 10, n: 20, power: (k) => (k === 0 ? 0 : 8), noiseC: 0.05 });
    const fit = identifySocketThermal(short, { offsetC: 0 });
    expect(fit.tauS).toBeNull();
    expect(fit.good).toBe(false);
  });
});

/** A rig of the simulator with one socket per θca ramp, stepped and read like the server reads it. */
function simulate(p: { ramps: number[]; stepS: number; samples: number; chamberC: number; noiseC: number; seed: number }) {
  const devices = makeLotDevices(DEMO_LOTS[0], p.ramps.length, 1);
  let st: RigState = createRigState({
    rigCode: 'RIG-T',
    chamberC: p.chamberC,
    setpointC: p.chamberC,
    sockets: devices.map((device, i) => ({
      device,
      biasOn: true,
      thetaCaCPerW: 2,
      caseTauS: 120,
      thetaCaRampCPerWPerH: p.ramps[i],
      thetaCaMaxCPerW: p.ramps[i] > 0 ? 24 : 2,
      vV: 20,
      ibA: 0.005,
    })),
  });
  const rand = mulberry32(p.seed);
  const out: Array<{ state: RigState; samples: Array<ThermalSample & { biasOn: boolean }> }> = [];
  for (let k = 0; k < p.samples; k++) {
    st = stepRig(st, p.stepS);
    out.push({
      state: st,
      samples: st.sockets.map((s) => ({
        tS: st.stressClockS,
        ambientC: st.chamberC,
        caseC: s.caseC + p.noiseC * gaussian(rand),
        powerW: s.powerW,
        biasOn: s.biasOn && !s.tripped,
      })),
    });
  }
  return out;
}

describe('SocketThermalTrack on the simulator (rig-simulator/physics.ts: θca 2 °C/W, τ 120 s)', () => {
  it('healthy sockets: the bias-on heat-up gives θ and τ within 10 % of the simulator’s; no flag', () => {
    const run = simulate({ ramps: [0, 0, 0], stepS: 30, samples: 60, chamberC: 100, noiseC: 0.2, seed: 11 });
    for (let i = 0; i < 3; i++) {
      const track = new SocketThermalTrack();
      const events = run.map((r) => track.push(r.samples[i])).filter((e) => e !== null);
      const first = events[0]!;
      expect(first.fit.method).toBe('arx');
      expect(Math.abs(first.fit.thetaCPerW! / 2 - 1)).toBeLessThan(0.1);
      expect(Math.abs(first.fit.tauS! / 120 - 1)).toBeLessThan(0.1);
      expect(events.some((e) => e.flag === 'raise')).toBe(false);
    }
  });

  it('a drying pad (θca +1 °C/W per stress hour) is flagged while its junction is still below protection’s margin zone', () => {
    const run = simulate({ ramps: [0, 1], stepS: 72, samples: 400, chamberC: 110, noiseC: 0.2, seed: 12 });
    const track = new SocketThermalTrack(DEFAULT_TRACK_OPTIONS);
    let flaggedAt = -1;
    run.forEach((r, k) => {
      const e = track.push(r.samples[1]);
      if (e?.flag === 'raise' && flaggedAt < 0) flaggedAt = k;
    });
    expect(flaggedAt).toBeGreaterThan(0);
    const s = run[flaggedAt].state.sockets[1];
    // True θca then: above the rise limit over the sound 2 °C/W, and the junction ≥ 10 K below Tj max
    // (protection's margin zone starts at Tj max − 10 °C, shared/safety/protection.ts DEFAULT_PROTECTION_OPTIONS).
    expect(s.thetaCaCPerW).toBeGreaterThan(2 * (1 + THERMAL_PATH_RISE_FRACTION));
    expect(s.tjC).toBeLessThan(s.device.tjMaxC - 10);
    // The healthy neighbour is never flagged.
    const healthy = new SocketThermalTrack();
    expect(run.map((r) => healthy.push(r.samples[0])).some((e) => e?.flag === 'raise')).toBe(false);
  });
});

describe('protectionThetaCa: the identified θca may raise protection’s θca, never lower it (rules.ts)', () => {
  it('a worse identified path raises both the θca and its bound; a better one changes nothing', () => {
    expect(protectionThetaCa({ windowThetaCa: 1.2, ratedBoundThetaCa: 60, identifiedThetaCa: 2 })).toEqual({
      thetaCa: 2,
      bound: 60,
      source: 'identified',
    });
    expect(protectionThetaCa({ windowThetaCa: 3, ratedBoundThetaCa: 60, identifiedThetaCa: 2 })).toEqual({
      thetaCa: 3,
      bound: 60,
      source: 'window',
    });
    expect(protectionThetaCa({ windowThetaCa: 500, ratedBoundThetaCa: 60, identifiedThetaCa: 75 })).toEqual({
      thetaCa: 75,
      bound: 75,
      source: 'window',
    });
    expect(protectionThetaCa({ windowThetaCa: null, ratedBoundThetaCa: 60, identifiedThetaCa: null })).toEqual({
      thetaCa: null,
      bound: 60,
      source: 'none',
    });
    expect(protectionThetaCa({ windowThetaCa: 500, ratedBoundThetaCa: 60, identifiedThetaCa: null })).toEqual({
      thetaCa: 60,
      bound: 60,
      source: 'window',
    });
  });
});
