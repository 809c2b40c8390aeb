/**
 * Plan check at the rating (issue #20 items 3 and 5): the chamber band in kelvin, temperature
 * warnings by kelvin margins, leakage from the hot point, and the forward SOA rule.
 */
import { deviceTypeInputSchema, type DeviceTypeInput } from '../../../shared/schemas/devices';
import { planInputSchema, type PlanInput } from '../../../shared/schemas/plans';
import { METHOD_CHAMBER_BAND_K } from '../../../shared/domain/standards';
import { buildPlanTemplates } from '../../../shared/plan-templates';
import { checkPlan, type PlanCheck } from '../../../shared/safety';
import { DEMO_DEVICE_TYPES } from '../../../server/seed/demo-data';

const ID = '8f6a1c3e-2b7d-4e59-9a10-3c4d5e6f7a8b';
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
    icboRefA: 1e-9,
    ...over,
  });
const plan = (kind: PlanInput['kind'], chamberC: number, bias: Partial<PlanInput['bias']>, over: Record<string, unknown> = {}): PlanInput =>
  planInputSchema.parse({
    name: 'check',
    kind,
    deviceTypeId: ID,
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

describe('the plan body carries a chamber band in kelvin', () => {
  test('absent → the method band of its kind; given → kept [memory: JESD22-A108 +5/−0, JESD22-A101 ± 2 — confirm]', () => {
    expect(plan('htrb', 150, { vcbV: 160 }).chamberBand).toEqual({ belowK: 0, aboveK: 5 });
    expect(plan('thb', 85, { vcbV: 160 }).chamberBand).toEqual(METHOD_CHAMBER_BAND_K.thb);
    expect(plan('htrb', 150, { vcbV: 160 }, { chamberBand: { belowK: 0, aboveK: 10 } }).chamberBand).toEqual({ belowK: 0, aboveK: 10 });
  });
  test('a negative or zero-width band is refused with a clear message', () => {
    const bad = (chamberBand: unknown) =>
      planInputSchema
        .safeParse({ ...plan('htrb', 150, { vcbV: 160 }), chamberBand })
        .error?.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
    expect(bad({ belowK: -1, aboveK: 5 })).toEqual(['chamberBand.belowK: A band cannot be negative']);
    expect(bad({ belowK: 0, aboveK: 0 })).toEqual([
      'chamberBand.aboveK: The chamber band needs some width (no chamber holds a temperature exactly)',
    ]);
  });
});

describe('temperatures judged by kelvin margins, not % of °C', () => {
  test('HTRB at Tj max (150 °C on a 150 °C part) passes with no warning [pub: JESD22-A108 — Tj at rated max]', () => {
    const r = checkPlan(device(), plan('htrb', 150, { vcbV: 160 }));
    expect(r.blocking).toBe(false);
    expect(r.findings.filter((f) => f.severity !== 'ok').map((f) => f.code)).toEqual([]);
    const j = finding(r, 'junction-temperature');
    expect(j.title).toBe('Predicted junction at its rating, within the band');
    expect(j.explanation).toContain('+5/−0 K');
  });
  test('reverse-bias junction beyond Tj max + the band blocks (chamber 150 °C, band +0.5 K, leakage heating > 0.5 K)', () => {
    // common practice: ICBO 10 nA at 25 °C doubling every 10 °C → ~58 µA at 150 °C, 9.3 mW at 160 V, θja 100 → ~1 K rise
    const r = checkPlan(device({ icboRefA: 10e-9 }), plan('htrb', 150, { vcbV: 160 }, { chamberBand: { belowK: 0, aboveK: 0.5 } }));
    expect(r.derived.tjC!).toBeGreaterThan(150.5);
    expect(finding(r, 'junction-temperature').severity).toBe('block');
  });
  test('powered junction: 140 °C on a 150 °C part is ok (10 K margin; "90 % of 150 °C" warned at 135), 147 °C warns (< 5 K) [practice]', () => {
    // [pub: JEDEC JESD51 definitions] Tj = Ta + θja·P: 25 + 100 × (10 V × 115 mA) = 140 °C
    const ok = checkPlan(device(), plan('hotl', 25, { vceV: 10, icA: 0.115 }));
    expect(ok.derived.tjC!).toBeCloseTo(140, 10);
    expect(finding(ok, 'junction-temperature').severity).toBe('ok');
    // 25 + 100 × (10 V × 122 mA) = 147 °C
    const near = checkPlan(device(), plan('hotl', 25, { vceV: 10, icA: 0.122 }));
    expect(near.derived.tjC!).toBeCloseTo(147, 10);
    expect(finding(near, 'junction-temperature').severity).toBe('warn');
  });
  test('cycling peak: 25 + 115 = 140 °C ok, 25 + 121 = 146 °C warns, 25 + 126 = 151 °C blocks [pub: MIL-STD-750 method 1037 swing; margin practice]', () => {
    const peak = (deltaTjC: number) =>
      finding(
        checkPlan(device(), plan('iol', 25, { vceV: 10, icA: 0.05 }, { cycle: { onMin: 2, offMin: 2, deltaTjC, cycles: 15000 } })),
        'cycle-peak-junction',
      ).severity;
    expect([peak(115), peak(121), peak(126)]).toEqual(['ok', 'warn', 'block']);
  });
});

describe('leakage from the hot point', () => {
  const d7 = () => {
    const t = DEMO_DEVICE_TYPES.find((x) => x.partNumber === 'HPD-7N400')!;
    return { id: ID, ...deviceTypeInputSchema.parse(t) };
  };
  test("the demo's 700 V part: its HTRB template at Tj max passes with the hot point, and is blocked as runaway without it", () => {
    const d = d7();
    const htrb = buildPlanTemplates(d).find((x) => x.kind === 'htrb')!.plan!;
    expect(htrb.chamberC).toBe(150);
    expect(htrb.chamberBand).toEqual({ belowK: 0, aboveK: 5 });
    const r = checkPlan(d, htrb);
    expect(r.blocking).toBe(false);
    expect(finding(r, 'leakage-self-heating').severity).toBe('ok');
    // [calc, REFERENCE A5 formula] 100 nA at 25 °C and 10 µA at 150 °C (invented demo point) → 125·ln2/ln(100) = 18.81 °C per doubling
    expect(r.derived.leakageDoublingC!).toBeCloseTo(18.81, 2);
    expect(finding(r, 'leakage-self-heating').explanation).toContain('doubling every 18.8 °C');
    // common practice (10 °C doubling from 100 nA at 25 °C): 560 V at 150–155 °C runs away
    const without = checkPlan({ ...d, icboHotA: null, icboHotC: null, icboHotVcbV: null }, htrb);
    expect(without.blocking).toBe(true);
    expect(finding(without, 'leakage-self-heating').title).toBe('Leakage runaway: no stable junction temperature');
  });
  test('a hot point measured below the plan VCB is scaled up by √V and says so [memory: Sze — confirm]', () => {
    const d = device({ icboRefA: 1e-9, icboHotA: 1e-6, icboHotC: 125, icboHotVcbV: 40 });
    const f = finding(checkPlan(d, plan('htrb', 125, { vcbV: 160 })), 'leakage-self-heating');
    expect(f.explanation).toContain('scaled ×2 from the point');
  });
});

describe('forward SOA for powered bipolar plans', () => {
  // A heat-sunk 100 W part (θja 2.5 K/W as mounted), S/b knee 15 V, n 2 (invented data sheet)
  const power = () =>
    device({
      icMaxA: 10,
      pMaxW: 100,
      tjMaxC: 175,
      thetaJcCPerW: 1.25,
      thetaJaCPerW: 2.5,
      bvcboV: 200,
      bvceoV: 120,
      sbKneeV: 15,
      sbSlopeN: 2,
    });
  test('a 25 V powered plan beyond SOA is refused with numbers [calc: REFERENCE A6 formulas; k_sb practice]', () => {
    const r = checkPlan(power(), plan('hotl', 25, { vceV: 25, icA: 2 }));
    const f = finding(r, 'forward-soa');
    // Tj = 25 + 2.5 × 50 W = 150 °C; Tc = 150 − 1.25 × 50 = 87.5 °C; I_sb(25 V) = (100/15)·(25/15)^−2 = 2.4 A;
    // k_sb = 1 − 0.5 × (87.5 − 25)/(175 − 25) = 0.7917 → 1.9 A < 2 A
    expect(r.blocking).toBe(true);
    expect(f.severity).toBe('block');
    expect(f.numbers.caseC.value).toBeCloseTo(87.5, 10);
    expect(f.numbers.sbIcA.value).toBeCloseTo(2.4 * 0.791667, 4);
    expect(f.numbers.allowedIcA.value).toBeCloseTo(1.9, 4);
    expect(f.explanation).toContain('second breakdown');
    expect(f.explanation).toContain('1.9 A');
    // only the SOA rule refuses it: power and junction are within their limits
    expect(r.findings.filter((x) => x.severity === 'block').map((x) => x.code)).toEqual(['forward-soa']);
  });
  test('the same 50 W at 15 V (at the knee) is within SOA', () => {
    const f = finding(checkPlan(power(), plan('hotl', 25, { vceV: 15, icA: 50 / 15 })), 'forward-soa');
    expect(f.severity).toBe('ok');
    expect(f.explanation).toContain('no second-breakdown limit');
  });
  test('reverse-bias plans and MOSFETs have no forward SOA finding', () => {
    expect(checkPlan(power(), plan('htrb', 150, { vcbV: 100 })).findings.some((f) => f.code === 'forward-soa')).toBe(false);
    const mos = checkPlan({ ...power(), kind: 'mosfet', polarity: 'N-channel' }, plan('hotl', 25, { vceV: 25, icA: 2 }));
    expect(mos.findings.some((f) => f.code === 'forward-soa')).toBe(false);
  });
});
