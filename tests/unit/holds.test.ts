/**
 * Read-point holds (shared/holds): the Magnus dew point against the IAPWS-IF97 saturation line, the
 * hold sequence step by step, and the simulated humidity chamber (rig-simulator) cooled the way the
 * scheduler cools it — which never lets the dry bulb reach the dew point — against cutting humidity
 * and heat at once, which does.
 */
import {
  DEFAULT_HOLD_SETTINGS,
  DEW_POINT_MARGIN_K,
  MAGNUS,
  coolingSetpointC,
  dewPointC,
  dewPointFromVapourC,
  holdStep,
  OPEN_MIN_C,
  relativeHumidityPct,
  saturationVapourPressureHpa,
  vapourPressureHpa,
  type HoldInput,
  type HoldPhase,
} from '../../shared/holds';
import { ROOM_AMBIENT_C } from '../../shared/domain/standards';
import { DEMO_PART, createRigState, stepRig, type DeviceModel, type RigState } from '../../rig-simulator/physics';

/**
 * Saturation pressure of water, MPa, from the IAPWS-IF97 region 4 saturation equation
 * [pub: IAPWS R7-97(2012), Industrial Formulation 1997, eq. 30 and Table 34 coefficients — recalled, checked below]. The
 * coefficients are checked below against the release's own verification values (Table 35).
 */
const IF97_N = [
  0, 0.11670521452767e4, -0.72421316598842e6, -0.17073846940092e2, 0.1202082470247e5, -0.32325550322333e7, 0.1491510861353e2,
  -0.48232657361591e4, 0.40511340542057e6, -0.23855557567849, 0.65017534844798e3,
];
function if97SaturationMPa(tK: number): number {
  const n = IF97_N;
  const th = tK + n[9] / (tK - n[10]);
  const a = th * th + n[1] * th + n[2];
  const b = n[3] * th * th + n[4] * th + n[5];
  const c = n[6] * th * th + n[7] * th + n[8];
  return Math.pow((2 * c) / (-b + Math.sqrt(b * b - 4 * a * c)), 4);
}
/** IF97 dew point: the temperature whose saturation pressure is eHpa (bisection), °C. */
function if97DewPointC(eHpa: number): number {
  let lo = 273.15;
  let hi = 640;
  for (let k = 0; k < 80; k++) {
    const mid = (lo + hi) / 2;
    if (if97SaturationMPa(mid) * 1e4 < eHpa) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2 - 273.15;
}

describe('dew point: Magnus with Alduchov & Eskridge (1996) coefficients', () => {
  test('the IF97 reference reproduces its published verification values', () => {
    // [pub: IAPWS R7-97(2012) Table 35; values and coefficients from memory — confirm] ps(300 K) =
    // 0.353658941e-2 MPa, ps(500 K) = 0.263889776e1, ps(600 K) = 0.123443146e2: within one unit of
    // the ninth significant digit (a wrong coefficient would miss by far more).
    for (const [tK, ref, unit] of [
      [300, 0.353658941e-2, 1e-11],
      [500, 0.263889776e1, 1e-8],
      [600, 0.123443146e2, 1e-7],
    ]) {
      expect(Math.abs(if97SaturationMPa(tK) - ref)).toBeLessThan(unit);
    }
  });

  test('the coefficients are the published ones', () => {
    // [pub: Alduchov & Eskridge 1996, J. Appl. Meteor. 35:601–609, AERK form] 6.1094 hPa, 17.625, 243.04 °C.
    expect(MAGNUS).toEqual({ cHpa: 6.1094, a: 17.625, bC: 243.04 });
  });

  test.each([0, 10, 20, 25, 30, 40, 50])('saturation pressure at %i °C within 0.4 %% of IF97', (tC) => {
    // [pub: Alduchov & Eskridge 1996] relative error of the AERK form below 0.4 % from −40 to +50 °C.
    const ref = if97SaturationMPa(tC + 273.15) * 1e4;
    expect(Math.abs(saturationVapourPressureHpa(tC) / ref - 1)).toBeLessThan(0.004);
  });

  test.each([
    [25, 50],
    [20, 60],
    [40, 30],
    [50, 80],
    [60, 85],
    [85, 85],
    [85, 50],
  ])('dew point of %i °C / %i %% RH within 0.25 K of the IF97 saturation line', (tC, rh) => {
    const e = (rh / 100) * if97SaturationMPa(tC + 273.15) * 1e4;
    expect(Math.abs(dewPointC(tC, rh) - if97DewPointC(e))).toBeLessThan(0.25);
  });

  test('check values', () => {
    // [memory — psychrometric chart] 25 °C / 50 % RH → dew point ≈ 13.9 °C; IF97 gives 13.864 °C.
    expect(dewPointC(25, 50)).toBeCloseTo(13.86, 1);
    // 85 °C / 85 % RH (the THB condition, JESD22-A101): IF97 80.909 °C; Magnus 80.967 °C.
    expect(dewPointC(85, 85)).toBeCloseTo(80.97, 2);
    expect(Math.abs(dewPointC(85, 85) - 80.909)).toBeLessThan(0.1);
    // Saturated air: the dew point is the dry bulb.
    expect(dewPointC(60, 100)).toBeCloseTo(60, 10);
  });

  test('vapour pressure, dew point and RH are consistent inverses', () => {
    for (const [t, rh] of [
      [85, 85],
      [30, 40],
      [55, 12],
    ]) {
      const e = vapourPressureHpa(t, rh);
      expect(dewPointFromVapourC(e)).toBeCloseTo(dewPointC(t, rh), 9);
      expect(relativeHumidityPct(t, e)).toBeCloseTo(rh, 9);
    }
  });
});

const base = (over: Partial<HoldInput> = {}): HoldInput => ({
  phase: 'cool-under-bias',
  chamberC: 145,
  humidityPct: null,
  anyBiased: true,
  ovenNeededHot: false,
  planChamberC: 145,
  humidityControlled: false,
  settings: DEFAULT_HOLD_SETTINGS,
  ...over,
});

describe('the hold sequence', () => {
  test('defaults: bias off at room ambient + 10 °C [pub: MIL-M-38510/757C §4.5.2], safe to open at 40 °C [practice]', () => {
    expect(DEFAULT_HOLD_SETTINGS).toEqual({ coolUnderBiasToC: 35, safeToOpenC: 40 });
    expect(ROOM_AMBIENT_C).toBe(25);
  });

  test('hot: cool under bias toward room ambient, bias stays on', () => {
    expect(holdStep(base())).toEqual({ phase: 'cool-under-bias', chamber: { setpointC: 25, humidityOff: false }, biasOff: false });
    expect(holdStep(base({ phase: null, chamberC: 35.1 }))).toMatchObject({ phase: 'cool-under-bias', biasOff: false });
  });

  test('at the "remove bias at" temperature: bias off; safe to open only at or below its own setting', () => {
    expect(holdStep(base({ chamberC: 35 }))).toEqual({
      phase: 'safe-to-open',
      chamber: { setpointC: 25, humidityOff: false },
      biasOff: true,
    });
    const s = { coolUnderBiasToC: 55, safeToOpenC: 40 };
    expect(holdStep(base({ chamberC: 54, settings: s }))).toMatchObject({ phase: 'bias-off', biasOff: true });
    expect(holdStep(base({ phase: 'bias-off', chamberC: 40.2, settings: s }))).toMatchObject({ phase: 'bias-off', biasOff: true });
    expect(holdStep(base({ phase: 'bias-off', chamberC: 40, settings: s }))).toMatchObject({ phase: 'safe-to-open', biasOff: true });
  });

  test('once bias is off it never comes back on, even if the chamber heats again', () => {
    expect(holdStep(base({ phase: 'bias-off', chamberC: 145, anyBiased: true }))).toMatchObject({ phase: 'bias-off', biasOff: true });
    expect(holdStep(base({ phase: 'safe-to-open', chamberC: 80 }))).toMatchObject({ phase: 'bias-off', biasOff: true });
    // A cycling chamber caught at its cold extreme is not opened until it is back in the standard
    // atmosphere for measurements (IEC 60068-1: 15–35 °C, from memory): cold parts gather condensation.
    expect(holdStep(base({ phase: 'bias-off', chamberC: -20, anyBiased: false }))).toMatchObject({
      phase: 'bias-off',
      chamber: { setpointC: 25 },
      biasOff: true,
    });
    expect(holdStep(base({ phase: 'bias-off', chamberC: OPEN_MIN_C, anyBiased: false }))).toMatchObject({ phase: 'safe-to-open' });
  });

  test('nothing biased (every socket tripped): nothing to cool under, bias-off at once', () => {
    expect(holdStep(base({ anyBiased: false }))).toMatchObject({ phase: 'bias-off', biasOff: true });
  });

  test('shared oven: the hold waits under bias and leaves the chamber alone; continues when the oven is free', () => {
    expect(holdStep(base({ ovenNeededHot: true }))).toEqual({ phase: 'oven-shared', chamber: null, biasOff: false });
    expect(holdStep(base({ phase: 'oven-shared', ovenNeededHot: false }))).toMatchObject({ phase: 'cool-under-bias', biasOff: false });
    // Bias already off (a hold that began before this rule): the chamber stays hot for the other run.
    expect(holdStep(base({ phase: 'bias-off', ovenNeededHot: true }))).toEqual({ phase: 'bias-off', chamber: null, biasOff: true });
  });

  test('humidity: control off first at the test temperature, then steps no lower than dew point + margin', () => {
    const thb = { planChamberC: 85, humidityControlled: true, settings: DEFAULT_HOLD_SETTINGS };
    // 85 °C / 85 %: dew point 80.97 °C + 3 K = 83.97 → 85 (a 5 K step); never above the plan's 85 °C.
    expect(coolingSetpointC({ ...thb, chamberC: 85, humidityPct: 85 })).toBe(85);
    expect(holdStep(base({ ...thb, chamberC: 85, humidityPct: 85 }))).toEqual({
      phase: 'cool-under-bias',
      chamber: { setpointC: 85, humidityOff: true },
      biasOff: false,
    });
    // 85 °C / 30 %: dew point 57.31 °C (IF97 57.03) + 3 K = 60.31 → 65.
    expect(dewPointC(85, 30)).toBeCloseTo(57.31, 2);
    expect(coolingSetpointC({ ...thb, chamberC: 85, humidityPct: 30 })).toBe(65);
    // Dry enough: room ambient.
    expect(coolingSetpointC({ ...thb, chamberC: 40, humidityPct: 20 })).toBe(25);
    // No humidity reading yet: hold the test temperature.
    expect(coolingSetpointC({ ...thb, chamberC: 85, humidityPct: null })).toBe(85);
    expect(DEW_POINT_MARGIN_K).toBe(3);
  });
});

// ---------------------------------------------------------------------------------------------
// The simulated humidity chamber cooled as the scheduler cools it.

const device: DeviceModel = {
  ...DEMO_PART,
  serial: 'H0001',
  lotCode: 'HG-THB-1',
  hfeDriftPctPer1000h: 0,
  leakageRatioPer1000h: 1,
  failMode: 'short',
};
const thbChamber = (): RigState =>
  createRigState({ rigCode: 'OV-H1', chamberC: 85, setpointC: 85, humidityPct: 85, sockets: [{ device, mode: 'reverse', vV: 100 }] });

/** Runs the chamber for up to maxS stress seconds in 60 s steps, calling `control` before each step; smallest dry bulb − dew point. */
function cool(control: (s: RigState) => RigState, maxS: number) {
  let s = thbChamber();
  let minGapK = Infinity;
  const setpoints = new Set<number>();
  for (let t = 0; t < maxS; t += 60) {
    s = control(s);
    setpoints.add(s.setpointC);
    s = stepRig(s, 60);
    minGapK = Math.min(minGapK, s.chamberC - dewPointFromVapourC(s.vapourHpa!));
  }
  return { s, minGapK, setpoints };
}

describe('a THB cool-down in the simulated chamber', () => {
  test('the chamber starts at 85 °C / 85 % RH with the dew point at 80.97 °C', () => {
    const s = thbChamber();
    expect(s.humidityPct).toBeCloseTo(85, 9);
    expect(dewPointFromVapourC(s.vapourHpa!)).toBeCloseTo(80.97, 2);
  });

  test('the hold sequence: the dry bulb stays above the dew point all the way to safe-to-open', () => {
    let phase: HoldPhase | null = 'cool-under-bias';
    const { s, minGapK, setpoints } = cool((st) => {
      const d = holdStep({
        phase,
        chamberC: st.chamberC,
        humidityPct: st.humidityPct,
        anyBiased: phase === 'cool-under-bias',
        ovenNeededHot: false,
        planChamberC: 85,
        humidityControlled: true,
        settings: DEFAULT_HOLD_SETTINGS,
      });
      phase = d.phase;
      return d.chamber
        ? { ...st, setpointC: d.chamber.setpointC, humiditySetpointPct: d.chamber.humidityOff ? null : st.humiditySetpointPct }
        : st;
    }, 48 * 3600);
    expect(phase).toBe('safe-to-open');
    expect(s.condensationS).toBe(0);
    expect(minGapK).toBeGreaterThan(0);
    // The ramp went down in steps (85, 80, …, 25), not in one jump.
    expect([...setpoints].sort((a, b) => b - a).slice(0, 3)).toEqual([85, 80, 75]);
    expect(Math.min(...setpoints)).toBe(25);
  });

  test('cutting humidity and heat at once (the old sequence) lets the dry bulb reach the dew point: water condenses', () => {
    const { s, minGapK } = cool((st) => ({ ...st, setpointC: 25, humiditySetpointPct: null }), 12 * 3600);
    expect(minGapK).toBeLessThanOrEqual(0);
    expect(s.condensationS).toBeGreaterThan(0);
  });
});
