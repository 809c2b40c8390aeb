import { deviceTypeInputSchema, type DeviceTypeInput } from '../../../shared/schemas/devices';
import { planInputSchema, type PlanInput } from '../../../shared/schemas/plans';
import { criticalAmbient, estimateBvceo, gainAtTemperature, leakageAtTemperature, thermalOperatingPoint } from '../../../shared/physics';
import { checkPlan, type PlanCheck } from '../../../shared/safety';

const device = (over: Partial<DeviceTypeInput> = {}): DeviceTypeInput =>
  deviceTypeInputSchema.parse({
    partNumber: 'HPD-2210',
    polarity: 'NPN',
    bvcboV: 200,
    bveboV: 7,
    icMaxA: 2,
    pMaxW: 25,
    tjMaxC: 150,
    thetaJcCPerW: 5,
    thetaJaCPerW: 100,
    betaRef: 100,
    betaRefIcA: 0.1,
    betaRefTC: 25,
    xtb: 1.5,
    icboRefA: 10e-9,
    ...over,
  });

const plan = (kind: PlanInput['kind'], chamberC: number, bias: Partial<PlanInput['bias']>, over: Record<string, unknown> = {}): PlanInput =>
  planInputSchema.parse({
    name: 'check',
    kind,
    deviceTypeId: '8f6a1c3e-2b7d-4e59-9a10-3c4d5e6f7a8b',
    chamberC,
    humidityPct: kind === 'thb' ? 85 : null,
    bias,
    durationH: 1000,
    sampleSize: 77,
    acceptNumber: 0,
    criteria: {},
    cycle: kind === 'iol' ? { onMin: 2, offMin: 2, deltaTjC: 100, cycles: 15000 } : null,
    ...over,
  });

const finding = (r: PlanCheck, code: string) => {
  const f = r.findings.find((x) => x.code === code);
  if (!f) throw new Error(`no finding ${code}: ${r.findings.map((x) => x.code).join(', ')}`);
  return f;
};

describe('reverse-bias plans', () => {
  test('safe HTRB at 80 % of BVCBO passes', () => {
    const r = checkPlan(device(), plan('htrb', 125, { vcbV: 160 }));
    // [pub: JESD22-A108; AEC-Q101 test table] reverse bias at 80 % of rated breakdown is the standard condition
    expect(r.blocking).toBe(false);
    expect(finding(r, 'vcb-vs-bvcbo').severity).toBe('ok');
    expect(r.derived.allowedVcbV).toBeCloseTo(160, 10);
    // common practice: ICBO doubles every 10 °C → 10 nA at 25 °C is 10.24 µA at 125 °C, 1.6 mW at 160 V;
    // [pub: JEDEC JESD51 definitions] Tj = Ta + θja·P ≈ 125 + 100 × 1.6 mW ≈ 125.17 °C
    expect(r.derived.tjC!).toBeGreaterThan(125.15);
    expect(r.derived.tjC!).toBeLessThan(125.2);
    expect(r.derived.leakageAtTjA!).toBeCloseTo(leakageAtTemperature({ iRefA: 10e-9, tRefC: 25, tC: r.derived.tjC! }), 15);
    expect(finding(r, 'leakage-self-heating').severity).toBe('ok');
    expect(finding(r, 'junction-temperature').severity).toBe('ok');
    expect(finding(r, 'chamber-vs-tjmax').severity).toBe('ok');
    // every check that ran reports, passed ones as 'ok'
    expect(r.findings.every((f) => f.severity === 'ok')).toBe(true);
  });

  test('95 % of BVCBO blocks', () => {
    const r = checkPlan(device(), plan('htrb', 125, { vcbV: 190 }));
    const f = finding(r, 'vcb-vs-bvcbo');
    // [pub: JESD22-A108; AEC-Q101 test table] the plan's derating (80 % of rated) is exceeded at 95 %
    expect(r.blocking).toBe(true);
    expect(f.severity).toBe('block');
    expect(f.numbers.fractionOfRating.value).toBeCloseTo(0.95, 10);
    expect(f.numbers.allowedVcbV.value).toBeCloseTo(160, 10);
    expect(f.explanation).toContain('190 V');
  });

  test('derating 0.95 lets 92 % through with a warning (within 10 % of the rating)', () => {
    const r = checkPlan(device(), plan('htrb', 125, { vcbV: 184 }, { breakdownDerating: 0.95 }));
    // common practice: a reverse bias within 10 % of the rated breakdown leaves little room for tolerance
    expect(finding(r, 'vcb-vs-bvcbo').severity).toBe('warn');
    expect(r.blocking).toBe(false);
  });

  test('emitter-base bias beyond BVEBO blocks as destructive', () => {
    const r = checkPlan(device(), plan('htrb', 125, { vcbV: 150, vebV: 8 }));
    const f = finding(r, 'veb-vs-bvebo');
    // common practice: emitter-base avalanche permanently lowers gain
    expect(f.severity).toBe('block');
    expect(f.explanation).toMatch(/permanently lowers the gain/);
    expect(f.numbers.bveboV.value).toBe(7);
    expect(r.blocking).toBe(true);
    // common practice: 5 V on a 7 V emitter-base junction is within the 80 % derating
    expect(finding(checkPlan(device(), plan('htrb', 125, { vcbV: 150, vebV: 5 })), 'veb-vs-bvebo').severity).toBe('ok');
  });

  test('leakage runaway blocks', () => {
    const leaky = device({ icboRefA: 1e-6 });
    const r = checkPlan(leaky, plan('htrb', 150, { vcbV: 160 }));
    // common practice: 1 µA at 25 °C doubling every 10 °C is 5.8 mA at 150 °C; 160 V × 5.8 mA × 100 °C/W ≫ the
    // 14.4 °C (10/ln 2) it can absorb — [pub: textbook thermal-stability criterion] loop gain ≥ 1, no steady state
    expect(finding(r, 'leakage-self-heating').severity).toBe('block');
    expect(finding(r, 'junction-temperature').severity).toBe('block');
    expect(r.derived.tjC).toBeNull();
    expect(r.blocking).toBe(true);
  });

  test('chamber above Tj max blocks', () => {
    const r = checkPlan(device(), plan('htrb', 160, { vcbV: 100 }));
    // [pub: JEDEC JESD51 definitions] the junction is at least at ambient: 160 °C > 150 °C rated
    expect(finding(r, 'chamber-vs-tjmax').severity).toBe('block');
    expect(finding(r, 'junction-temperature').severity).toBe('block');
  });

  test('no ICBO figure: junction at chamber, leakage not assessed', () => {
    const r = checkPlan(device({ icboRefA: null }), plan('thb', 85, { vcbV: 160 }));
    expect(r.derived.tjC).toBe(85);
    expect(finding(r, 'leakage-self-heating').title).toMatch(/not assessed/);
  });
});

describe('powered plans', () => {
  test('safe forced-IB operating life', () => {
    const r = checkPlan(device(), plan('hotl', 85, { vceV: 10, ibA: 0.1e-3 }));
    const op = thermalOperatingPoint({ ambientC: 85, thetaCPerW: 100, vceV: 10, ibA: 0.1e-3, betaRef: 100, tRefC: 25, xtb: 1.5 });
    expect(r.blocking).toBe(false);
    // [pub: Gummel–Poon model as in SPICE] β(85 °C) = 100 × (358.15/298.15)^1.5 = 131.7
    expect(r.derived.betaAtChamber).toBeCloseTo(131.7, 1);
    // [pub: JEDEC JESD51 definitions] Tj = Ta + θja·VCE·β(Tj)·IB, ≈ 98.6 °C
    expect(r.derived.tjC!).toBeCloseTo(op.tjC, 6);
    expect(r.derived.tjC!).toBeGreaterThan(98);
    expect(r.derived.tjC!).toBeLessThan(99.5);
    // [pub: JEDEC JESD51 definitions] derated limit (150 − 85)/5 = 13 W
    expect(r.derived.deratedPowerLimitW).toBeCloseTo(13, 10);
    expect(finding(r, 'dissipation-vs-derated-limit').severity).toBe('ok');
    // [pub: textbook thermal-stability criterion] loop gain θ·P·XTB/T ≈ 100 × 0.138 × 1.5 / 371.8 ≈ 0.056
    expect(r.derived.loopGain!).toBeCloseTo(0.056, 2);
    expect(finding(r, 'thermal-runaway').severity).toBe('ok');
    expect(r.derived.runawayMarginC!).toBeGreaterThan(25);
    expect(finding(r, 'runaway-margin').severity).toBe('ok');
  });

  test('forced IB that runs away blocks with loop gain ≥ 1', () => {
    const r = checkPlan(device(), plan('hotl', 125, { vceV: 10, ibA: 2e-3 }));
    const f = finding(r, 'thermal-runaway');
    // [pub: textbook thermal-stability criterion] 10 V × 2 mA × β(125 °C)=154 → 3.1 W, θja 100 °C/W: no steady state
    expect(f.severity).toBe('block');
    expect(f.numbers.loopGain.value).toBeGreaterThanOrEqual(1);
    expect(r.derived.loopGain!).toBeGreaterThanOrEqual(1);
    expect(r.derived.tjC).toBeNull();
    expect(finding(r, 'junction-temperature').severity).toBe('block');
    expect(finding(r, 'runaway-margin').severity).toBe('block');
    // [pub: Gummel–Poon model as in SPICE] dissipation shown as a lower bound at the chamber gain: 10 V × 2 mA × 153.8
    expect(r.derived.powerW!).toBeCloseTo(10 * 2e-3 * gainAtTemperature({ betaRef: 100, tRefC: 25, tC: 125, xtb: 1.5 }), 10);
    expect(r.blocking).toBe(true);
  });

  test('small margin to the critical ambient warns', () => {
    const dev = device({ xtb: 4 });
    const loop = { thetaCPerW: 100, vceV: 10, ibA: 0.3e-3, betaRef: 100, tRefC: 25, xtb: 4 };
    const crit = criticalAmbient(loop);
    const chamber = Math.round(crit - 15);
    const r = checkPlan(dev, plan('hotl', chamber, { vceV: 10, ibA: 0.3e-3 }));
    // [pub: textbook thermal-stability criterion] 15 °C below the critical ambient is under the 25 °C margin
    expect(finding(r, 'runaway-margin').severity).toBe('warn');
    expect(r.derived.runawayMarginC!).toBeCloseTo(crit - chamber, 6);
  });

  test('VCE 0.2 V is flagged as outside the active region', () => {
    const r = checkPlan(device(), plan('hotl', 85, { vceV: 0.2, icA: 0.5 }));
    const f = finding(r, 'vce-active-region');
    // common practice: below 0.3 V a BJT is saturated
    expect(f.severity).toBe('warn');
    expect(f.numbers.vceV.value).toBe(0.2);
  });

  test('regulated IC: no gain loop; dissipation close to the derated limit warns', () => {
    const r = checkPlan(device({ thetaJaCPerW: 5.2 }), plan('hotl', 85, { vceV: 20, icA: 0.6 }));
    // [pub: JEDEC JESD51 definitions] 20 V × 0.6 A = 12 W against (150 − 85)/5 = 13 W: 92 %, within 10 % of the limit
    const d = finding(r, 'dissipation-vs-derated-limit');
    expect(d.severity).toBe('warn');
    expect(d.numbers.powerW.value).toBeCloseTo(12, 10);
    expect(d.numbers.limitW.value).toBeCloseTo(13, 10);
    expect(finding(r, 'thermal-runaway').severity).toBe('ok');
    // [pub: JEDEC JESD51 definitions] Tj = 85 + 5.2 × 12 = 147.4 °C: within 10 % of 150 °C
    expect(r.derived.tjC!).toBeCloseTo(147.4, 10);
    expect(finding(r, 'junction-temperature').severity).toBe('warn');
  });

  test('dissipation above the derated limit blocks', () => {
    const r = checkPlan(device(), plan('hotl', 125, { vceV: 20, icA: 0.3 }));
    // [pub: JEDEC JESD51 definitions] 6 W against (150 − 125)/5 = 5 W
    expect(finding(r, 'dissipation-vs-derated-limit').severity).toBe('block');
    expect(r.derived.deratedPowerLimitW).toBeCloseTo(5, 10);
  });

  test('VCE against an estimated BVCEO, and against a rated one', () => {
    const est = checkPlan(device(), plan('hotl', 85, { vceV: 45, icA: 0.01 }));
    const f = finding(est, 'vce-vs-bvceo');
    // [pub: Neamen, Semiconductor Physics and Devices] BVCEO ≈ BVCBO/β^(1/n) = 200/131.7^(1/3) ≈ 39.3 V; 45 V blocks
    expect(est.derived.bvceoV!).toBeCloseTo(estimateBvceo({ bvcbo: 200, beta: est.derived.betaAtChamber, n: 3 }), 10);
    expect(est.derived.bvceoV!).toBeCloseTo(39.3, 1);
    expect(est.derived.bvceoEstimated).toBe(1);
    expect(f.severity).toBe('block');
    expect(f.explanation).toMatch(/estimated/);
    // common practice: collector-emitter breakdown is often about half the collector-base figure
    expect(f.explanation).toMatch(/half of BVCBO/);
    const rated = checkPlan(device({ bvceoV: 60 }), plan('hotl', 85, { vceV: 45, icA: 0.01 }));
    // [pub: Neamen, Semiconductor Physics and Devices] a rated 60 V: 45 V is within the 48 V derated allowance
    expect(finding(rated, 'vce-vs-bvceo').severity).toBe('ok');
    expect(rated.derived.bvceoEstimated).toBe(0);
  });

  test('MOSFET: the bipolar runaway loop is not applied', () => {
    const r = checkPlan(device({ kind: 'mosfet', polarity: 'N-channel' }), plan('hotl', 85, { vceV: 10, icA: 0.05 }));
    const f = finding(r, 'thermal-runaway');
    // common practice: MOSFET drain current falls with temperature at fixed gate drive
    expect(f.severity).toBe('ok');
    expect(f.explanation).toMatch(/MOSFET/);
    expect(r.findings.some((x) => x.code === 'runaway-margin')).toBe(false);
  });

  test('intermittent life: swing above Tj max blocks', () => {
    const r = checkPlan(device(), plan('iol', 60, { vceV: 10, icA: 0.05 }));
    // [pub: MIL-STD-750 method 1037 as used by AEC-Q101] ΔTj 100 °C from 60 °C peaks at 160 °C > 150 °C
    expect(finding(r, 'cycle-peak-junction').severity).toBe('block');
    expect(finding(r, 'cycle-peak-junction').numbers.peakTjC.value).toBe(160);
  });
});
