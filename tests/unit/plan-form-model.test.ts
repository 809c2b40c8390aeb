/**
 * The plan form's model (components/plans/plan-form-model.ts): defaults, the fields each stress
 * sends, validation through the API's own schema, and the conversion both ways.
 */
import {
  EMPTY_FORM,
  emptyForm,
  fieldsFor,
  formFromPlan,
  incompleteReason,
  maxBiasV,
  rawFromForm,
  serverFieldErrors,
  validateForm,
  type FormState,
} from '../../components/plans/plan-form-model';

const DEVICE = '00000000-0000-4000-8000-0000000000d1';

describe('defaults of a blank plan', () => {
  it.each([
    // [field, shown text, source]
    ['readPoints', '0, 168, 500, 1000', 'common practice (read points 0 / 168 / 500 / 1000 h)'],
    ['durationH', '1000', 'JESD22-A108 / MIL-PRF-19500 group C life: 1000 h'],
    ['sampleSize', '77', 'AEC-Q101 test table, 77 per lot (from memory)'],
    ['acceptNumber', '0', 'AEC-Q101 test table, accept 0 (from memory)'],
    ['hfeChangePct', '15', 'MIL-PRF-19500 slash-sheet delta limits: hFE ±15 %'],
    ['leakageMultiple', '2', 'MIL-PRF-19500 delta limits: ICBO change ≤ 100 % of initial'],
    ['leakageFloornA', '200', 'MIL-PRF-19500 delta limits: or 200 nA'],
    ['vcesatShiftmV', '50', 'MIL-PRF-19500 delta limits: VCE(sat) ≤ 50 mV'],
    ['eaEv', '0.7', 'common practice: Ea 0.7 eV'],
    ['useC', '55', 'common practice: 55 °C use temperature'],
    ['deratingPct', '80', 'JESD22-A108: 80 % of rated breakdown'],
    ['tolerancePct', '5', "Emberlot's own bias band"],
    ['onMin', '2', 'MIL-STD-750 method 1037 as used by AEC-Q101: on-time = off-time (2 min our choice)'],
    ['offMin', '2', 'as above'],
    ['deltaTjC', '100', 'MIL-STD-750 method 1037: ΔTj ≥ 100 °C'],
    ['cycles', '15000', 'MIL-STD-750 method 1037: 15,000 cycles at ΔTj 100 °C'],
  ] as const)('%s shows %s (%s)', (key, text, _source) => {
    expect(EMPTY_FORM[key]).toBe(text);
  });

  it('leaves the plan’s own choices empty; a part can be preset', () => {
    expect([EMPTY_FORM.name, EMPTY_FORM.kind, EMPTY_FORM.deviceTypeId, EMPTY_FORM.chamberC, EMPTY_FORM.vcbV, EMPTY_FORM.vceV]).toEqual([
      '',
      undefined,
      undefined,
      '',
      '',
      '',
    ]);
    expect(emptyForm(DEVICE)).toEqual({ ...EMPTY_FORM, deviceTypeId: DEVICE });
  });
});

const htrb: FormState = {
  ...EMPTY_FORM,
  name: 'HTRB 145',
  kind: 'htrb',
  deviceTypeId: DEVICE,
  chamberC: '145',
  vcbV: '112',
  vebV: '',
  vceV: '30',
  icmA: '96',
};
const hotl: FormState = {
  ...EMPTY_FORM,
  name: 'HOTL',
  kind: 'hotl',
  deviceTypeId: DEVICE,
  chamberC: '25',
  vceV: '20',
  biasMode: 'ic',
  icmA: '96',
  vcbV: '50',
};

describe('a temperature-cycling plan typed in cycles', () => {
  it('read points typed in cycles go to the API as hours of the profile (56 min a cycle for −55/+125 °C, 10 min, 10 K/min)', () => {
    const s = { ...EMPTY_FORM, kind: 'tc' as const, chamberC: '125', readPoints: '0, 250, 500, 1000', tcCycles: '1000' };
    const raw = rawFromForm(s);
    const periodH = 56 / 60;
    expect(raw.readPointsH).toEqual([0, 250 * periodH, 500 * periodH, 1000 * periodH]);
    expect(raw.durationH).toBeCloseTo(1000 * periodH, 9);
    expect(raw.thermalCycle).toEqual({ lowC: -55, highC: 125, dwellMin: 10, rampKPerMin: 10, cycles: 1000 });
    expect(raw.bias).toMatchObject({ vcbV: null, vceV: null, icA: null, ibA: null });
  });
});

describe('fields per stress (shared/domain/stress.ts families)', () => {
  it('shows reverse-bias fields for htrb and thb, powered fields for hotl and iol, humidity for thb, cycling for iol', () => {
    const none = { unbiased: false, thermalCycling: false, autoclave: false };
    expect(fieldsFor('htrb')).toEqual({ reverse: true, powered: false, humidity: false, cycling: false, ...none });
    expect(fieldsFor('thb')).toEqual({ reverse: true, powered: false, humidity: true, cycling: false, ...none });
    expect(fieldsFor('hotl')).toEqual({ reverse: false, powered: true, humidity: false, cycling: false, ...none });
    expect(fieldsFor('iol')).toEqual({ reverse: false, powered: true, humidity: false, cycling: true, ...none });
    expect(fieldsFor(undefined)).toEqual({ reverse: false, powered: false, humidity: false, cycling: false, ...none });
    // The chamber kinds: no bias; tc shows its profile, ac its condition (its humidity comes with it).
    expect(fieldsFor('tc')).toMatchObject({ reverse: false, powered: false, unbiased: true, thermalCycling: true, autoclave: false });
    expect(fieldsFor('ac')).toMatchObject({ reverse: false, powered: false, humidity: false, unbiased: true, autoclave: true });
  });

  it('sends only the bias of the chosen family, in SI units', () => {
    expect(rawFromForm(htrb).bias).toEqual({ vcbV: 112, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 });
    expect(rawFromForm(hotl).bias).toEqual({ vcbV: null, vebV: null, vceV: 20, ibA: null, icA: 0.096, tolerancePct: 5 });
    expect(rawFromForm({ ...hotl, biasMode: 'ib', ibmA: '0.6' }).bias).toMatchObject({ ibA: 0.0006, icA: null });
    expect(rawFromForm(htrb).cycle).toBeNull();
    expect(rawFromForm({ ...hotl, kind: 'iol' }).cycle).toEqual({ onMin: 2, offMin: 2, deltaTjC: 100, cycles: 15000 });
    expect(rawFromForm({ ...htrb, humidityPct: '85' }).humidityPct).toBeNull();
    expect(rawFromForm({ ...htrb, kind: 'thb', humidityPct: '85' }).humidityPct).toBe(85);
  });
});

describe('validation through planInputSchema', () => {
  it('a blank form asks for the stress and the part', () => {
    const { plan, errors } = validateForm(EMPTY_FORM);
    expect(plan).toBeNull();
    expect(errors.kind).toBe('Choose the stress');
    expect(errors.deviceTypeId).toBe('Choose a device type');
    expect(incompleteReason(EMPTY_FORM, errors)).toBe('Choose a device type and a stress to see the check.');
    expect(incompleteReason({ ...EMPTY_FORM, deviceTypeId: DEVICE }, errors)).toBe('Choose the stress to see the check.');
  });

  it('a powered plan without a current is refused on the VCE field (the schema’s rule)', () => {
    const { plan, errors } = validateForm({ ...hotl, icmA: '' });
    expect(plan).toBeNull();
    expect(errors.vceV).toBe('Powered plans need VCE and either IB or IC');
    expect(incompleteReason({ ...hotl, icmA: '' }, errors)).toBe(
      'Complete the plan to see the check — VCE: Powered plans need VCE and either IB or IC.',
    );
  });

  it('a typed letter is "Enter a number"; a read point past the end is named', () => {
    expect(validateForm({ ...htrb, chamberC: 'x' }).errors.chamberC).toBe('Enter a number');
    expect(validateForm({ ...htrb, readPoints: '0, 168, 2000' }).errors.readPoints).toBe('A read point lies after the end of the run');
  });

  it('a complete plan comes back as the API body and round-trips through the form', () => {
    const { plan, errors } = validateForm(htrb);
    expect(errors).toEqual({});
    expect(plan).toMatchObject({
      kind: 'htrb',
      chamberC: 145,
      readPointsH: [0, 168, 500, 1000],
      breakdownDerating: 0.8,
      criteria: { vcesatShiftV: 0.05 },
    });
    expect(plan!.criteria.leakageFloorA).toBeCloseTo(200e-9, 15); // 200 nA typed, × 1e-9 in floating point
    expect(incompleteReason(htrb, errors)).toBeNull();
    // an empty band is the method's (HTRB +5/−0 K [memory: JESD22-A108 — confirm]), shown filled in once parsed
    expect(plan!.chamberBand).toEqual({ belowK: 0, aboveK: 5 });
    expect(formFromPlan(plan!)).toEqual({ ...htrb, vceV: '', icmA: '', bandBelowK: '0', bandAboveK: '5' });
  });

  it('a band typed in kelvin goes to the body; one side left empty is an error on that field', () => {
    expect(validateForm({ ...htrb, bandBelowK: '0', bandAboveK: '10' }).plan!.chamberBand).toEqual({ belowK: 0, aboveK: 10 });
    expect(validateForm({ ...htrb, bandBelowK: '', bandAboveK: '10' }).errors).toEqual({ bandBelowK: 'Enter a number' });
    expect(validateForm({ ...htrb, bandBelowK: '-1', bandAboveK: '5' }).errors).toEqual({ bandBelowK: 'A band cannot be negative' });
  });

  it('maps the API’s field errors onto the form’s fields', () => {
    expect(
      serverFieldErrors({ 'bias.icA': ['Too high', 'x'], 'criteria.leakageFloorA': ['Too low'], readPointsH: ['Bad'], name: ['Taken'] }),
    ).toEqual({
      icmA: 'Too high',
      leakageFloornA: 'Too low',
      readPoints: 'Bad',
      name: 'Taken',
    });
  });

  it('the safety caution quotes the highest bias voltage typed', () => {
    expect(maxBiasV(htrb)).toBe(112);
    expect(maxBiasV({ ...EMPTY_FORM, vceV: 'abc' })).toBe(0);
  });
});
