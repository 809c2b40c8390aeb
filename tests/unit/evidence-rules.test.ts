/**
 * The evidence rules in shared/evidence: read-point completeness, the words testers write for dead
 * devices, the measuring-condition comparison with time zero, the sample shortfall.
 */
import {
  catastrophicWord,
  conditionDifferences,
  isJudgeable,
  MEASURING_TEMP_TOLERANCE_C,
  readPointCoverage,
  sampleShortfall,
  TEST_CONDITION_TOLERANCE_PCT,
} from '../../shared/evidence';

describe('readPointCoverage (common practice: every sampled device is accounted for at each read point)', () => {
  const devices = ['d1', 'd2', 'd3', 'd4', 'd5'].map((deviceId) => ({ deviceId }));
  it.each([
    // [case, readings, dispositions, h, expected counts, missing]
    ['nothing stored', [], [], 168, { measured: 0, catastrophic: 0, disposed: 0, deadEarlier: 0 }, ['d1', 'd2', 'd3', 'd4', 'd5']],
    [
      'one measured, one open, one lost earlier, one dead earlier, one missing',
      [
        { deviceId: 'd1', readPointH: 168, result: 'measured' as const },
        { deviceId: 'd2', readPointH: 168, result: 'open' as const },
        { deviceId: 'd4', readPointH: 0, result: 'short' as const },
      ],
      [{ deviceId: 'd3', readPointH: 0, kind: 'lost' as const }],
      168,
      { measured: 1, catastrophic: 1, disposed: 1, deadEarlier: 1 },
      ['d5'],
    ],
    [
      'a disposition from a later read point does not cover an earlier one',
      devices.slice(0, 4).map((d) => ({ deviceId: d.deviceId, readPointH: 168, result: 'measured' as const })),
      [{ deviceId: 'd5', readPointH: 500, kind: 'excluded' as const }],
      168,
      { measured: 4, catastrophic: 0, disposed: 0, deadEarlier: 0 },
      ['d5'],
    ],
    [
      'a re-seated device still needs its reading',
      devices.slice(0, 4).map((d) => ({ deviceId: d.deviceId, readPointH: 168, result: 'measured' as const })),
      [{ deviceId: 'd5', readPointH: 168, kind: 'reseated' as const }],
      168,
      { measured: 4, catastrophic: 0, disposed: 0, deadEarlier: 0 },
      ['d5'],
    ],
  ])('%s', (_name, readings, dispositions, h, counts, missing) => {
    const c = readPointCoverage(devices, readings, dispositions, h);
    expect(c).toMatchObject({ expected: 5, ...counts, missing, complete: missing.length === 0 });
  });

  it('complete when every device has a reading or a final disposition', () => {
    const readings = devices.slice(0, 4).map((d) => ({ deviceId: d.deviceId, readPointH: 500, result: 'measured' as const }));
    expect(readPointCoverage(devices, readings, [{ deviceId: 'd5', readPointH: 168, kind: 'trip-failure' }], 500)).toMatchObject({
      complete: true,
      disposed: 1,
    });
  });
});

describe('catastrophicWord (common practice: testers print OPEN / SHORT in place of a value)', () => {
  it.each([
    ['OPEN', 'open'],
    [' open ', 'open'],
    ['SHORT', 'short'],
    ['Shorted', 'short'],
    ['N/R', 'no-reading'],
    ['no reading', 'no-reading'],
    ['NO_READING', 'no-reading'],
    ['118', null],
    ['', null],
    ['opened', null],
  ])('%j → %j', (raw, want) => expect(catastrophicWord(raw)).toBe(want));
});

describe('conditionDifferences', () => {
  const t0 = { measuredC: 25, hfeIcA: 0.15, hfeVceV: 5, icboVcbV: 112 };
  it(`measuring temperature within ± ${MEASURING_TEMP_TOLERANCE_C} °C of time zero agrees (MIL-STD-750 room ambient 25 ± 3 °C, from memory)`, () => {
    expect(conditionDifferences(t0, { ...t0, measuredC: 28 })).toEqual([]);
    expect(conditionDifferences(t0, { ...t0, measuredC: 22 })).toEqual([]);
    expect(conditionDifferences(t0, { ...t0, measuredC: 28.1 })).toEqual(['Measured at 28.1 °C; time zero at 25 °C (allowed ± 3 °C).']);
  });
  it(`test conditions within ± ${TEST_CONDITION_TOLERANCE_PCT} % agree (common practice)`, () => {
    expect(conditionDifferences(t0, { ...t0, hfeIcA: 0.153 })).toEqual([]);
    expect(conditionDifferences(t0, { ...t0, hfeVceV: 5.2, icboVcbV: 100 })).toEqual([
      'VCE for hFE 5.2 V; time zero 5 V (+4 %, allowed ± 2 %).',
      'VCB for ICBO 100 V; time zero 112 V (-10.7 %, allowed ± 2 %).',
    ]);
  });
  it('a condition not stated on one side is not compared', () => {
    expect(conditionDifferences({ ...t0, hfeIcA: null }, { ...t0, hfeIcA: 1 })).toEqual([]);
  });
  it('a flagged reading is judged only once confirmed', () => {
    expect(isJudgeable({ conditionsFlag: null, confirmedAt: null })).toBe(true);
    expect(isJudgeable({ conditionsFlag: 'x', confirmedAt: null })).toBe(false);
    expect(isJudgeable({ conditionsFlag: 'x', confirmedAt: new Date() })).toBe(true);
  });
});

describe('sampleShortfall', () => {
  it('names the plan size, the booking and the gap', () => {
    // [pub: AEC-Q101 test table] 77 devices per lot for HTRB.
    expect(sampleShortfall(77, 64)).toBe('The plan asks for 77 devices; this booking holds 64 (13 short).');
    expect(sampleShortfall(77, 77)).toBeNull();
    expect(sampleShortfall(77, 80)).toBeNull();
  });

  it('asks for the plan size per lot when a booking spans several lots', () => {
    // [pub: AEC-Q101 test table] "77 × 3 lots": the sample is per lot, and the verdict judges each lot alone.
    expect(sampleShortfall(77, 77, 2)).toBe(
      'Each lot is judged on its own devices: the plan asks for 77 per lot, 154 for 2 lots; this booking holds 77 (77 short).',
    );
    expect(sampleShortfall(77, 154, 2)).toBeNull();
    expect(sampleShortfall(77, 231, 3)).toBeNull();
    expect(sampleShortfall(77, 64, 1)).toBe('The plan asks for 77 devices; this booking holds 64 (13 short).');
  });
});
