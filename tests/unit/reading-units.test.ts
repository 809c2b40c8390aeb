/**
 * Read-point files (issue #23 item 4): each column's unit is read from its header, never assumed;
 * a test condition beyond the part's ratings is refused with the numbers; a re-checked file gives
 * one message whose counts add up.
 */
import { columnUnit, ownColumn, splitHeaderUnit, templateCsv, exampleCsv, UNIT_FACTOR } from '../../shared/domain/measurement-columns';
import { ratingProblems } from '../../shared/domain/reading-plausibility';
import { checkSummary, countsAddUp } from '../../shared/domain/upload-summary';
import { parseMeasurementCsv } from '../../server/modules/measurements/csv-rows';

describe('units from the header', () => {
  // SI prefixes p, n, µ, m = 1e-12, 1e-9, 1e-6, 1e-3 (BIPM SI Brochure, 9th ed., table 7).
  it.each([
    ['IC (mA)', 'hfe_ic_a', 'mA', 1e-3],
    ['ICBO [nA]', 'icbo_a', 'nA', 1e-9],
    ['VCE(sat)/V', 'vcesat_v', 'V', 1],
    ['VCE(sat) (mV)', 'vcesat_v', 'mV', 1e-3],
    ['icbo_na', 'icbo_a', 'nA', 1e-9],
    ['ICBO µA', 'icbo_a', 'uA', 1e-6],
    ['hfe_ic_a', 'hfe_ic_a', 'A', 1],
    ['icbo_a', 'icbo_a', 'A', 1],
    ['hfe_vce_v', 'hfe_vce_v', 'V', 1],
    ['VCB (V)', 'icbo_vcb_v', 'V', 1],
    ['icbo_pa', 'icbo_a', 'pA', 1e-12],
  ] as const)('%s → %s in %s', (header, column, unit, factor) => {
    expect(ownColumn(header)).toBe(column);
    expect(columnUnit(column, header)).toEqual({ unit, problem: null });
    expect(UNIT_FACTOR[unit]).toBe(factor);
  });

  it('a name’s own bracket is not a unit: "VCE(sat)" states none', () => {
    expect(splitHeaderUnit('VCE(sat)')).toEqual({ base: 'VCE(sat)', unitText: null, unit: null });
    expect(ownColumn('VCE(sat)')).toBe('vcesat_v');
    expect(columnUnit('vcesat_v', 'VCE(sat)').problem).toBe(
      'Column "VCE(sat)" (VCE(sat)) states no unit; write it in the header, e.g. "VCE(sat) (mV)" (mV, V).',
    );
  });

  it('a missing or unknown unit is a column problem in words, never a default to A or V', () => {
    expect(columnUnit('hfe_ic_a', 'IC')).toEqual({
      unit: null,
      problem: 'Column "IC" (IC for hFE) states no unit; write it in the header, e.g. "IC (A)" (pA, nA, µA, mA, A).',
    });
    expect(columnUnit('icbo_a', 'ICBO (furlongs)').problem).toBe(
      'Column "ICBO (furlongs)" (ICBO leakage) gives the unit "furlongs", which is not one of pA, nA, µA, mA, A.',
    );
    // A voltage unit on a current column is refused too.
    expect(columnUnit('hfe_ic_a', 'IC (mV)').problem).toMatch(/gives the unit "mV", which is not one of pA, nA, µA, mA, A/);
    // Columns without a unit pass as they are.
    expect(columnUnit('hfe', 'Gain')).toEqual({ unit: null, problem: null });
    expect(columnUnit('temp_c', 'Temp')).toEqual({ unit: null, problem: null });
  });

  it('the template and the example file read back with every unit stated', () => {
    for (const text of [templateCsv(), exampleCsv()]) {
      const out = parseMeasurementCsv(Buffer.from(text), { mapping: {}, defaultTempC: 25, now: new Date('2026-05-01T00:00:00Z') });
      expect(Object.values(out.columns).filter((c) => c === null)).toEqual([]);
    }
    const ex = parseMeasurementCsv(Buffer.from(exampleCsv()), { mapping: {}, defaultTempC: 25, now: new Date('2026-05-01T00:00:00Z') });
    // 1000 mA = 1 A, 35 nA = 3.5e-8 A, 420 mV = 0.42 V (SI prefixes).
    expect(ex.rows[0].values).toMatchObject({ hfeIcA: 1, icboA: 35e-9, vcesatV: 0.42, result: 'measured' });
    expect(ex.rows[2].values).toMatchObject({ result: 'open', hfe: null });
  });

  it('the server refuses a file whose header states no unit, naming the column, before reading any row', () => {
    const text = 'serial,hfe,IC,VCE (V),ICBO [nA],VCB (V),VCE(sat)/V\nA1,100,1,5,20,80,0.2\n';
    expect(() => parseMeasurementCsv(Buffer.from(text), { mapping: {}, defaultTempC: 25, now: new Date() })).toThrow(
      /The file's units cannot be read; nothing was checked\. Column "IC" \(IC for hFE\) states no unit/,
    );
  });
});

describe('test conditions against the part’s ratings', () => {
  // An invented part's ratings (IC max 2 A, BVCBO 200 V), as the engineer journey enters them.
  const part = { partNumber: 'HPD-E2E', icMaxA: 2, bvcboV: 200 };
  it.each([
    [{ hfeIcA: 10, icboVcbV: 80 }, ['The hFE test current 10 A is above the rated IC max of HPD-E2E (2 A); check the unit in the header.']],
    [{ hfeIcA: 2, icboVcbV: 200 }, []], // at the rating is allowed (common practice: conditions within the absolute maximum)
    [
      { hfeIcA: 0.5, icboVcbV: 240 },
      ['The ICBO test voltage 240 V is above the rated BVCBO of HPD-E2E (200 V); check the unit in the header.'],
    ],
    [{ hfeIcA: null, icboVcbV: null }, []],
  ])('%j', (r, expected) => {
    expect(ratingProblems(r, part)).toEqual(expected);
  });
});

describe('one message for a checked file', () => {
  const base = { rowsTotal: 5, inserted: 0, replaced: 0, unchanged: 5, rejected: 0, late: 0 };
  it('the same file again, identical: nothing to store, and no "replace" in the words', () => {
    const s = checkSummary(base, '2026-12-04 10:00 UTC');
    expect(s).toEqual({
      text: '5 rows: identical to the file stored on 2026-12-04 10:00 UTC, nothing to store (5 already stored).',
      storable: 0,
    });
    expect(countsAddUp(base)).toBe(true);
  });
  it('the same file read with other columns: says what differs and that it is stored once', () => {
    const c = { ...base, replaced: 5, unchanged: 0 };
    const s = checkSummary(c, '2026-12-04 10:00 UTC');
    expect(s.text).toMatch(
      /^5 rows: this exact file was stored on 2026-12-04 10:00 UTC; read with the columns chosen now, 5 replace a stored reading and 0 are new/,
    );
    expect(s.text).not.toMatch(/nothing to store|changes nothing/);
    expect(s.storable).toBe(0);
  });
  it('a new file: counts that add up to the rows', () => {
    const c = { rowsTotal: 6, inserted: 3, replaced: 1, unchanged: 1, rejected: 1, late: 1 };
    expect(countsAddUp(c)).toBe(true);
    expect(checkSummary(c)).toEqual({
      text: '6 rows: 3 new, 1 replace a stored reading (needs a reason), 1 already stored, 1 refused, 1 late.',
      storable: 4,
    });
  });
});
