/**
 * Rig simulator physics. Sources are named beside each check (see ../shared/REFERENCE.md §4).
 */
import { solveSelfHeating } from '../../shared/physics';
import { telemetrySchema } from '../../shared/mqtt';
import {
  DEMO_LOTS,
  DEMO_PART,
  applyCommand,
  buildTelemetry,
  createRigState,
  createRng,
  deviceGain,
  deviceLeakage,
  makeLotDevices,
  measureReadPoint,
  readPointCsv,
  readPointTable,
  socketPowerAt,
  stepRig,
  type DeviceModel,
  type RigState,
} from '../../rig-simulator';

const device = (over: Partial<DeviceModel> = {}): DeviceModel => ({
  serial: 'HPD-L0000-001',
  partNumber: DEMO_PART.partNumber,
  lotCode: 'HPD-L0000',
  betaRef: 80,
  betaRefTC: 25,
  xtb: 1.5,
  icboRefA: 10e-9,
  icboRefTC: 25,
  doublingC: 10,
  thetaJcCPerW: 1.5,
  tjMaxC: 150,
  hfeDriftPctPer1000h: 0,
  leakageRatioPer1000h: 1,
  failMode: 'short',
  ...over,
});

/** Step in equal chunks of dtS for totalS. */
function run(state: RigState, totalS: number, dtS = 900): RigState {
  let s = state;
  for (let t = 0; t < totalS - 1e-9; t += dtS) s = stepRig(s, Math.min(dtS, totalS - t));
  return s;
}

describe('device gain and leakage versus temperature', () => {
  test.each([
    // [pub: Gummel–Poon model as in SPICE] β(T) = β_ref·(T/T_ref)^XTB, kelvin; REFERENCE.md §4 check values
    [127, 153.9],
    [-40, 68.5],
    [27, 100],
  ])('β 100 at 27 °C, XTB 1.5 → β at %p °C ≈ %p', (tC, expected) => {
    const d = device({ betaRef: 100, betaRefTC: 27, xtb: 1.5 });
    expect(deviceGain(d, tC)).toBeCloseTo(expected, 1); // [pub: Gummel–Poon model as in SPICE]
  });

  test('leakage doubles every 10 °C: 10 nA at 25 °C → 10.24 µA at 125 °C', () => {
    const d = device();
    expect(deviceLeakage(d, 125)).toBeCloseTo(10.24e-6, 9); // common practice (ICBO doubles per ~10 °C)
    expect(deviceLeakage(d, 85) / deviceLeakage(d, 75)).toBeCloseTo(2, 10); // common practice
  });

  test('lot drift scales gain linearly and leakage geometrically with stress hours', () => {
    const d = device({ hfeDriftPctPer1000h: -12, leakageRatioPer1000h: 3.6 });
    expect(deviceGain(d, 25, 1000) / deviceGain(d, 25, 0)).toBeCloseTo(0.88, 10); // from the model's definition
    expect(deviceLeakage(d, 25, 1000) / deviceLeakage(d, 25, 0)).toBeCloseTo(3.6, 10); // from the model's definition
    expect(deviceLeakage(d, 25, 500) / deviceLeakage(d, 25, 0)).toBeCloseTo(Math.sqrt(3.6), 10); // from the model's definition
  });
});

describe('oven thermal lag (first-order response, textbook)', () => {
  const oven = (tauS: number) =>
    createRigState({ rigCode: 'OV-01', chamberC: 25, setpointC: 125, chamberTauS: tauS, sockets: [{ device: device() }] });

  test('63.2 % of the step after one τ, ≥ 99 % after five τ', () => {
    const tau = 1800; // 0.5 stress-hour
    const afterOne = run(oven(tau), tau, 60);
    expect((afterOne.chamberC - 25) / 100).toBeCloseTo(1 - Math.exp(-1), 3); // textbook: 1 − e⁻¹ = 0.632
    const afterFive = run(oven(tau), 5 * tau, 60);
    expect((afterFive.chamberC - 25) / 100).toBeGreaterThanOrEqual(0.99); // textbook: 1 − e⁻⁵ = 0.9933
  });

  test('the result does not depend on the step size', () => {
    const fine = run(oven(1800), 3600, 10);
    const coarse = run(oven(1800), 3600, 3600);
    expect(coarse.chamberC).toBeCloseTo(fine.chamberC, 6);
    expect(coarse.stressClockS).toBe(3600);
  });

  test('humidity follows its setpoint with the same lag; none when the rig has no humidity', () => {
    let s = createRigState({ rigCode: 'OV-03', chamberC: 25, sockets: [{ device: device() }], humidityPct: 30 });
    s = { ...s, humiditySetpointPct: 85 };
    s = run(s, 1800, 60);
    expect(s.humidityPct!).toBeCloseTo(30 + 55 * (1 - Math.exp(-1)), 2); // textbook first-order response
    const dry = run(createRigState({ rigCode: 'OV-04', sockets: [{ device: device() }] }), 3600);
    expect(dry.humidityPct).toBeNull();
  });
});

describe('self-heating at fixed base current', () => {
  const rig = (thetaCa: number) =>
    createRigState({
      rigCode: 'OV-01',
      chamberC: 100,
      sockets: [{ device: device(), biasOn: true, vV: 20, ibA: 0.005, thetaCaCPerW: thetaCa, caseTauS: 120 }],
    });

  test('a well heat-sunk socket settles at the steady state of Tj = Ta + θ·P(Tj)', () => {
    const settled = run(rig(2), 4 * 3600, 300).sockets[0];
    const expected = solveSelfHeating({
      ambientC: 100,
      thetaCPerW: 2 + 1.5,
      powerAt: socketPowerAt(settled),
    });
    expect(expected.runaway).toBe(false);
    expect(expected.loopGain).toBeLessThan(1); // [pub: textbook thermal-stability criterion] θ·∂P/∂Tj < 1
    expect(settled.tjC).toBeCloseTo(expected.tjC, 1); // consistency with the steady-state solver (common practice)
    expect(settled.destroyed).toBeNull();
    expect(settled.tjC).toBeLessThan(150);
    // Tj = Tc + θjc·P [pub: JEDEC JESD51 definitions]
    expect(settled.tjC).toBeCloseTo(settled.caseC + 1.5 * settled.powerW, 6);
  });

  test('a poorly heat-sunk socket runs away and is destroyed; the solver agrees there is no steady state', () => {
    const start = rig(24);
    const solver = solveSelfHeating({ ambientC: 100, thetaCPerW: 24 + 1.5, powerAt: socketPowerAt(start.sockets[0]) });
    expect(solver.runaway).toBe(true); // [pub: textbook thermal-stability criterion]
    let s = start;
    let peak = -Infinity;
    for (let k = 0; k < 48 && !s.sockets[0].destroyed; k++) {
      s = stepRig(s, 60);
      peak = Math.max(peak, s.sockets[0].tjC);
    }
    expect(s.sockets[0].destroyed).toBe('short');
    expect(peak).toBeGreaterThan(150 + 50); // destroyed only beyond Tj max + 50 °C (simulator rule)
    const after = run(s, 3600, 300).sockets[0];
    expect(after.iA).toBe(2); // shorted: the supply sits at its current limit
  });

  test('a trip removes bias: the junction cools to the chamber and the device survives', () => {
    let s = rig(24);
    while (s.sockets[0].tjC <= 150) s = stepRig(s, 5); // trip as soon as Tj passes its rating
    expect(s.sockets[0].destroyed).toBeNull();
    const tripped = applyCommand(s, { v: 1, cmdId: 't1', type: 'trip', socket: 0, reason: 'Tj above limit' });
    expect(tripped.ok).toBe(true);
    s = run(tripped.state, 3600, 300);
    expect(s.sockets[0].destroyed).toBeNull();
    expect(s.sockets[0].iA).toBe(0);
    expect(s.sockets[0].tjC).toBeCloseTo(100, 1);
  });

  test('a degrading heat sink creeps first, then runs away', () => {
    let s = createRigState({
      rigCode: 'OV-01',
      chamberC: 100,
      sockets: [{ device: device(), biasOn: true, thetaCaCPerW: 2, thetaCaRampCPerWPerH: 1, thetaCaMaxCPerW: 24 }],
    });
    const trace: number[] = [];
    for (let k = 0; k < 40 && !s.sockets[0].destroyed; k++) {
      s = stepRig(s, 900);
      trace.push(s.sockets[0].tjC);
    }
    expect(s.sockets[0].destroyed).not.toBeNull();
    // several samples above Tj max before destruction: time for a protection trip
    expect(trace.filter((t) => t > 150 && t < 200).length).toBeGreaterThanOrEqual(3);
  });

  test('reverse bias dissipates next to nothing: case stays at the chamber', () => {
    const s = run(
      createRigState({ rigCode: 'OV-02', chamberC: 150, sockets: [{ device: device(), mode: 'reverse', vV: 160, biasOn: true }] }),
      3600,
    ).sockets[0];
    // common practice: doubling per 10 °C — 10 nA at 25 °C → 2^12.5 × at 150 °C (Tj a few mK above)
    expect(s.iA / (10e-9 * Math.pow(2, 12.5))).toBeCloseTo(1, 2);
    expect(s.iA).toBeCloseTo(10e-9 * Math.pow(2, (s.tjC - 25) / 10), 15);
    expect(s.caseC - 150).toBeLessThan(0.1);
    expect(s.stressH).toBeCloseTo(1, 6);
  });
});

describe('regulated collector current (the rig servoes IB to hold IC)', () => {
  const board = (over: { icA?: number; ibA?: number; chamberC?: number; dev?: Partial<DeviceModel> }) =>
    createRigState({
      rigCode: 'OV-04',
      chamberC: over.chamberC ?? 100,
      sockets: [
        {
          device: device(over.dev),
          biasOn: true,
          vV: 20,
          thetaCaCPerW: 2,
          caseTauS: 120,
          ...(over.icA !== undefined ? { icA: over.icA } : { ibA: over.ibA }),
        },
      ],
    });

  test('IC stays at the set point while the gain rises with Tj; forced IB lets it climb with β(T)', () => {
    const ic = 0.4;
    const regulated = run(board({ icA: ic }), 4 * 3600, 300).sockets[0];
    // The same 0.4 A at 25 °C as a forced IB: IB = IC / β_ref.
    const forced = run(board({ ibA: ic / 80 }), 4 * 3600, 300).sockets[0];
    expect(regulated.iA).toBeCloseTo(ic, 12);
    // IC = β·IB + (β+1)·ICBO at the forced board's Tj, β(T) = β_ref·(T/T_ref)^XTB
    // [pub: Gummel–Poon temperature law as in SPICE; common-emitter leakage relation, textbook]
    const beta = 80 * Math.pow((forced.tjC + 273.15) / (25 + 273.15), 1.5);
    const icbo = 10e-9 * Math.pow(2, (forced.tjC - 25) / 10); // common practice: doubling per 10 °C
    expect(forced.iA).toBeCloseTo(beta * (ic / 80) + (beta + 1) * icbo, 6);
    expect(forced.iA).toBeGreaterThan(ic * 1.3);
    // Tj = Tc + θjc·P and Tc = Ta + θca·P at steady state [pub: JEDEC JESD51 definitions]; the regulator's
    // base drive IB = (IC − (β+1)·ICBO)/β at the settled Tj.
    const b = deviceGain(regulated.device, regulated.tjC, regulated.stressH);
    const ib = (ic - (b + 1) * deviceLeakage(regulated.device, regulated.tjC, regulated.stressH)) / b;
    expect(regulated.powerW).toBeCloseTo(20 * ic + 0.7 * ib, 9);
    expect(regulated.tjC).toBeCloseTo(regulated.caseC + 1.5 * regulated.powerW, 6);
    expect(regulated.caseC).toBeCloseTo(100 + 2 * regulated.powerW, 1);
    // Constant power: the steady-state solver sees no loop gain to speak of [pub: textbook stability criterion θ·∂P/∂Tj < 1].
    const solved = solveSelfHeating({ ambientC: 100, thetaCPerW: 3.5, powerAt: socketPowerAt(regulated) });
    expect(solved.runaway).toBe(false);
    expect(Math.abs(solved.loopGain)).toBeLessThan(0.01);
  });

  test('leakage above the set point flows regardless: the regulator cannot drive IB below zero', () => {
    // A leaky part (100 nA at 25 °C) at 175 °C and a 1 mA set point: (β+1)·ICBO is about half an ampere.
    const s = createRigState({
      rigCode: 'OV-04',
      chamberC: 175,
      sockets: [{ device: device({ icboRefA: 1e-7 }), biasOn: true, vV: 20, icA: 0.001 }],
    }).sockets[0];
    const b = deviceGain(s.device, s.tjC, 0);
    const leak = (b + 1) * deviceLeakage(s.device, s.tjC, 0);
    expect(leak).toBeGreaterThan(0.1);
    expect(leak).toBeLessThan(2); // below the supply's current limit
    expect(s.iA).toBeCloseTo(leak, 12);
    expect(s.powerW).toBeCloseTo(20 * leak, 9); // IB = 0
  });
});

describe('commands on the physics state', () => {
  const base = createRigState({ rigCode: 'OV-01', sockets: [{ device: device() }, { device: device() }], maxTempC: 200 });

  test('a setpoint above the rig maximum is refused and changes nothing', () => {
    const r = applyCommand(base, { v: 1, cmdId: 'c1', type: 'setpoint', setpointC: 260 });
    expect(r).toMatchObject({ ok: false, error: "setpoint 260 °C is above this rig's maximum of 200 °C" });
    expect(r.state).toBe(base);
  });

  test('bias on an unknown socket is refused; a valid one applies', () => {
    const bad = applyCommand(base, { v: 1, cmdId: 'c2', type: 'bias', sockets: [1, 7], on: true });
    expect(bad.ok).toBe(false);
    expect(bad.error).toBe('no socket 7 on this rig (sockets 0–1)');
    const good = applyCommand(base, { v: 1, cmdId: 'c3', type: 'bias', sockets: 'all', on: true, vV: 25, iA: 0.004 });
    expect(good.state.sockets.map((s) => [s.biasOn, s.vV, s.ibA])).toEqual([
      [true, 25, 0.004],
      [true, 25, 0.004],
    ]);
  });

  test('icA regulates IC on powered sockets; a later iA returns to forced IB; both at once or on reverse bias is refused', () => {
    const reg = applyCommand(base, { v: 1, cmdId: 'r1', type: 'bias', sockets: 'all', on: true, vV: 20, icA: 0.3 });
    expect(reg.ok).toBe(true);
    expect(reg.state.sockets.map((s) => s.icSetA)).toEqual([0.3, 0.3]);
    expect(stepRig(reg.state, 60).sockets[0].iA).toBeCloseTo(0.3, 12);
    const forced = applyCommand(reg.state, { v: 1, cmdId: 'r2', type: 'bias', sockets: [1], on: true, iA: 0.004 });
    expect(forced.state.sockets.map((s) => [s.icSetA, s.ibA])).toEqual([
      [0.3, base.sockets[0].ibA],
      [null, 0.004],
    ]);
    const both = applyCommand(base, { v: 1, cmdId: 'r3', type: 'bias', sockets: 'all', on: true, iA: 0.004, icA: 0.3 });
    expect(both).toMatchObject({ ok: false, error: 'give iA (forced base current) or icA (regulated collector current), not both' });
    expect(both.state).toBe(base);
    const reverse = createRigState({ rigCode: 'OV-02', sockets: [{ device: device(), mode: 'reverse' }, { device: device() }] });
    const refused = applyCommand(reverse, { v: 1, cmdId: 'r4', type: 'bias', sockets: 'all', on: true, icA: 0.3 });
    expect(refused).toMatchObject({ ok: false, error: 'icA needs powered bias; socket 0 is reverse-biased' });
    expect(refused.state).toBe(reverse);
  });

  test('reset-trip clears the latch but leaves bias off', () => {
    const on = applyCommand(base, { v: 1, cmdId: 'c4', type: 'bias', sockets: [0], on: true }).state;
    const tripped = applyCommand(on, { v: 1, cmdId: 'c5', type: 'trip', socket: 0, reason: 'test' }).state;
    const reset = applyCommand(tripped, { v: 1, cmdId: 'c6', type: 'reset-trip', socket: 0 }).state;
    expect(reset.sockets[0]).toMatchObject({ tripped: false, biasOn: false, tripReason: null });
  });
});

describe('telemetry and read points', () => {
  test('telemetry built from a noisy state always satisfies the v1 contract', () => {
    const devices = makeLotDevices(DEMO_LOTS[0], 8);
    let s = createRigState({
      rigCode: 'OV-01',
      chamberC: 100,
      sockets: devices.map((d, i) => ({ device: d, biasOn: true, thetaCaCPerW: i === 3 ? 24 : 2 })),
    });
    const rng = createRng(7);
    for (let k = 1; k <= 20; k++) {
      s = stepRig(s, 900);
      const msg = buildTelemetry(s, k, new Date(), { noise: { tempC: 0.5, currentPct: 1 }, rng });
      const parsed = telemetrySchema.safeParse(msg);
      expect(parsed.success).toBe(true);
    }
  });

  test('read-point measurements are deterministic and follow the lot drift', () => {
    const [healthy] = makeLotDevices(DEMO_LOTS[0], 1);
    const [drifting] = makeLotDevices(DEMO_LOTS[1], 1);
    expect(measureReadPoint(drifting, 500)).toEqual(measureReadPoint(drifting, 500));
    const ratio = (d: DeviceModel, h: number, key: 'hfe' | 'icboA') => measureReadPoint(d, h)[key] / measureReadPoint(d, 0)[key];
    // healthy lot stays inside ±15 % hFE and ≤ 2× ICBO at 1000 h [pub: MIL-PRF-19500 slash-sheet delta limits]
    expect(Math.abs(ratio(healthy, 1000, 'hfe') - 1)).toBeLessThan(0.15);
    expect(ratio(healthy, 1000, 'icboA')).toBeLessThan(2);
    // drifting lot: leakage beyond 2× of initial by 1000 h [pub: MIL-PRF-19500 slash-sheet delta limits]
    expect(ratio(drifting, 1000, 'icboA')).toBeGreaterThan(2);
    expect(ratio(drifting, 1000, 'icboA')).toBeCloseTo(drifting.leakageRatioPer1000h, 0); // model definition ± noise
    expect(ratio(drifting, 1000, 'hfe')).toBeCloseTo(1 + drifting.hfeDriftPctPer1000h / 100, 1); // model definition ± noise
  });

  test('read-point CSV has one row per device and read point', () => {
    const devices = makeLotDevices(DEMO_LOTS[1], 3);
    const csv = readPointCsv(readPointTable(devices));
    const lines = csv.trim().split('\n');
    expect(lines[0]).toBe('serial,lot,part_number,read_point_h,hfe,icbo_a');
    expect(lines).toHaveLength(1 + 3 * 4);
    expect(lines[1]).toMatch(/^HPD-L2411-001,HPD-L2411,HPD-T220N,0,\d/);
  });
});
