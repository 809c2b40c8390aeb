import {
  ACTIVE_REGION_MIN_VCE_V,
  criticalAmbient,
  criticalAmbientFor,
  criticalAmbientReverseBias,
  deratedPowerLimit,
  estimateBvceo,
  gainAtTemperature,
  junctionTemperature,
  leakageAtTemperature,
  reverseBiasOperatingPoint,
  solveSelfHeating,
  thermalOperatingPoint,
} from '../../shared/physics';

const within = (actual: number, expected: number, relTol: number) =>
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * relTol);

describe('gain, breakdown, leakage, derating check values', () => {
  test('gain-temperature law', () => {
    const base = { betaRef: 100, tRefC: 27, xtb: 1.5 };
    // [pub: Gummel–Poon model as in SPICE] β 100 at 27 °C, XTB 1.5 → 153.9 at 127 °C
    expect(gainAtTemperature({ ...base, tC: 127 })).toBeCloseTo(153.9, 1);
    // [pub: Gummel–Poon model as in SPICE] → 68.5 at −40 °C
    expect(gainAtTemperature({ ...base, tC: -40 })).toBeCloseTo(68.5, 1);
    // [pub: Gummel–Poon model as in SPICE] at the reference temperature the gain is β_ref
    expect(gainAtTemperature({ ...base, tC: 27 })).toBeCloseTo(100, 10);
  });

  test.each([1.5, 2])('gain roughly doubles from −55 °C to room temperature, XTB %p', (xtb) => {
    const b = (tC: number) => gainAtTemperature({ betaRef: 100, tRefC: 25, tC, xtb });
    const ratio = b(25) / b(-55);
    // common practice: gain roughly doubles from −55 °C to room temperature (XTB ≈ 1.5–2 gives 1.6–1.9×)
    expect(ratio).toBeGreaterThan(1.5);
    expect(ratio).toBeLessThan(2.2);
    const rise = b(125) / b(25);
    // common practice: gain rises by about half again from room temperature to 125 °C (1.54× at XTB 1.5, 1.78× at XTB 2)
    expect(rise).toBeGreaterThan(1.4);
    expect(rise).toBeLessThan(1.8);
  });

  test('open-base breakdown', () => {
    // [pub: Neamen, Semiconductor Physics and Devices] BVCBO 200 V, β 120, n 3 → 40.55 V
    expect(estimateBvceo({ bvcbo: 200, beta: 120, n: 3 })).toBeCloseTo(40.55, 2);
  });

  test('leakage doubling', () => {
    // common practice: ICBO doubles every 10 °C: 10 nA at 25 °C → 10.24 µA at 125 °C
    expect(leakageAtTemperature({ iRefA: 10e-9, tRefC: 25, tC: 125 })).toBeCloseTo(10.24e-6, 12);
    // common practice: a 15 °C doubling step gives 2^(100/15) ≈ 101.6×
    within(leakageAtTemperature({ iRefA: 1e-9, tRefC: 25, tC: 125, doublingC: 15 }), 101.59e-9, 1e-3);
  });

  test('junction temperature and derating', () => {
    // [pub: JEDEC JESD51 definitions] Tj = Tc + θjc·P: 85 °C + 2 °C/W × 10 W = 105 °C
    expect(junctionTemperature({ referenceC: 85, thetaCPerW: 2, powerW: 10 })).toBe(105);
    // [pub: JEDEC JESD51 definitions] Tj_max 150 °C, θja 556 °C/W → 116.9 mW at 85 °C
    expect(deratedPowerLimit({ tjMaxC: 150, tC: 85, thetaCPerW: 556 })).toBeCloseTo(0.1169, 4);
    // [pub: JEDEC JESD51 definitions] no allowance at or above Tj_max (clamped at 0)
    expect(deratedPowerLimit({ tjMaxC: 150, tC: 160, thetaCPerW: 556 })).toBe(0);
  });

  test('active-region constant', () => {
    // common practice: a silicon BJT below about 0.3 V VCE is saturated
    expect(ACTIVE_REGION_MIN_VCE_V).toBe(0.3);
  });
});

describe('self-heating solver against the linear-gain closed form', () => {
  // β = β0(1 + a(T − T0)) at fixed IB: K = θ·VCE·IB·β0, Tj = (Ta + K(1 − a·T0)) / (1 − K·a)
  const linear = (p: { theta: number; vce: number; ib: number; beta0: number; a: number; t0: number }) => ({
    powerAt: (t: number) => p.vce * p.ib * p.beta0 * (1 + p.a * (t - p.t0)),
    k: p.theta * p.vce * p.ib * p.beta0,
  });

  test.each([
    { ta: 25, theta: 50, vce: 10, ib: 1e-3, beta0: 100, a: 0.005, t0: 25 },
    { ta: 125, theta: 20, vce: 20, ib: 0.5e-3, beta0: 150, a: 0.008, t0: 25 },
    { ta: -40, theta: 80, vce: 5, ib: 2e-3, beta0: 60, a: 0.01, t0: 25 },
  ])('stable case Ta $ta, θ $theta', (c) => {
    const { powerAt, k } = linear(c);
    const expected = (c.ta + k * (1 - c.a * c.t0)) / (1 - k * c.a);
    const r = solveSelfHeating({ ambientC: c.ta, thetaCPerW: c.theta, powerAt });
    // [pub: textbook thermal-stability criterion] closed form Tj = (Ta + K(1 − aT0))/(1 − Ka), stable while Ka < 1
    expect(r.runaway).toBe(false);
    expect(r.tjC).toBeCloseTo(expected, 6);
    // [pub: textbook thermal-stability criterion] loop gain θ·∂P/∂Tj = K·a for the linear gain
    expect(r.loopGain).toBeCloseTo(k * c.a, 6);
  });

  test('runaway when K·a ≥ 1', () => {
    const { powerAt, k } = linear({ theta: 50, vce: 20, ib: 1e-3, beta0: 100, a: 0.012, t0: 25 });
    expect(k * 0.012).toBeGreaterThanOrEqual(1);
    const r = solveSelfHeating({ ambientC: 25, thetaCPerW: 50, powerAt });
    // [pub: textbook thermal-stability criterion] K·a = 1.2 ≥ 1 → no stable steady state
    expect(r.runaway).toBe(true);
    expect(r.tjC).toBe(Infinity);
    // [pub: textbook thermal-stability criterion] reported loop gain is K·a (constant for a linear gain)
    expect(r.loopGain).toBeCloseTo(1.2, 6);
  });

  test('critical ambient for a convex dissipation matches the tangency condition', () => {
    // P(T) = P0·exp(T/c): at the critical point loop gain θ·P/c = 1 and f(T*) = 0, so θ·P(T*) = c,
    // T* = Ta + c, hence Ta_crit = c·(ln(c/(θ·P0)) − 1)
    const p0 = 0.01;
    const c = 20;
    const theta = 50;
    const expected = c * (Math.log(c / (theta * p0)) - 1);
    const got = criticalAmbientFor({ thetaCPerW: theta, powerAt: (t) => p0 * Math.exp(t / c) });
    // [pub: textbook thermal-stability criterion] stability is lost where loop gain reaches 1 (tangency), 20·(ln 40 − 1) = 53.78 °C
    expect(got).toBeCloseTo(expected, 1);
  });
});

describe('forced-base BJT operating point', () => {
  const dev = { thetaCPerW: 60, vceV: 10, ibA: 0.5e-3, betaRef: 100, tRefC: 25, xtb: 1.5 };

  test('operating point satisfies its own heat balance', () => {
    const r = thermalOperatingPoint({ ...dev, ambientC: 25 });
    expect(r.runaway).toBe(false);
    const beta = gainAtTemperature({ betaRef: 100, tRefC: 25, tC: r.tjC, xtb: 1.5 });
    // [pub: JEDEC JESD51 definitions] Tj = Ta + θ·P with P = VCE·β(Tj)·IB
    expect(r.tjC).toBeCloseTo(25 + 60 * 10 * beta * 0.5e-3, 6);
    expect(r.icA).toBeCloseTo(beta * 0.5e-3, 9);
    expect(r.powerW).toBeCloseTo(10 * r.icA, 9);
    // [pub: textbook thermal-stability criterion] loop gain θ·P·XTB/T_K for the power-law gain
    expect(r.loopGain).toBeCloseTo((60 * r.powerW * 1.5) / (r.tjC + 273.15), 4);
    expect(r.loopGain).toBeLessThan(1);
  });

  test('critical ambient is consistent with the operating point', () => {
    const hot = { ...dev, xtb: 4, ibA: 1.5e-3 };
    const crit = criticalAmbient(hot);
    expect(Number.isFinite(crit)).toBe(true);
    // [pub: textbook thermal-stability criterion] 0.5 °C below the critical ambient → stable, 0.5 °C above → runaway
    expect(thermalOperatingPoint({ ...hot, ambientC: crit - 0.5 }).runaway).toBe(false);
    expect(thermalOperatingPoint({ ...hot, ambientC: crit + 0.5 }).runaway).toBe(true);
    // [pub: textbook thermal-stability criterion] loop gain approaches 1 near the critical ambient
    expect(thermalOperatingPoint({ ...hot, ambientC: crit - 0.05 }).loopGain).toBeGreaterThan(0.85);
  });

  test('zero base current: junction at ambient, no runaway', () => {
    const r = thermalOperatingPoint({ ...dev, ibA: 0, ambientC: 70 });
    // [pub: JEDEC JESD51 definitions] no dissipation → Tj = ambient
    expect(r).toMatchObject({ tjC: 70, powerW: 0, runaway: false });
  });
});

describe('reverse-bias leakage self-heating', () => {
  test('small leakage: junction barely above ambient', () => {
    const r = reverseBiasOperatingPoint({ ambientC: 150, thetaCPerW: 100, vrV: 80, iLeakRefA: 10e-9, tRefC: 25, doublingC: 10 });
    const i = leakageAtTemperature({ iRefA: 10e-9, tRefC: 25, tC: r.tjC });
    // common practice: leakage doubling every 10 °C; [pub: JEDEC JESD51 definitions] Tj = Ta + θ·V·I(Tj)
    expect(r.tjC).toBeCloseTo(150 + 100 * 80 * i, 6);
    expect(r.tjC - 150).toBeLessThan(1);
    // common practice: loop gain θ·P·ln2/10 for a doubling every 10 °C
    expect(r.loopGain).toBeCloseTo((100 * r.powerW * Math.LN2) / 10, 4);
  });

  test('large leakage runs away and critical ambient splits the cases', () => {
    const base = { thetaCPerW: 100, vrV: 400, iLeakRefA: 1e-6, tRefC: 25, doublingC: 10 };
    // common practice: 1 µA at 25 °C, 400 V, θ 100 °C/W → at 150 °C leakage 5.8 mA, 2.3 W: far beyond balance
    expect(reverseBiasOperatingPoint({ ...base, ambientC: 150 }).runaway).toBe(true);
    const crit = criticalAmbientReverseBias(base);
    // common practice: consistency of the critical ambient with the operating point
    expect(reverseBiasOperatingPoint({ ...base, ambientC: crit - 0.5 }).runaway).toBe(false);
    expect(reverseBiasOperatingPoint({ ...base, ambientC: crit + 0.5 }).runaway).toBe(true);
  });
});
