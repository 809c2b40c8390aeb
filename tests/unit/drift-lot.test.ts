/**
 * Code added on top of shared/stats and shared/reliability: device drift across read points with
 * gain referral, lot trends and verdicts, CSV row checks and CSV-injection neutralising.
 */
import type { DeviceDriftView } from '../../shared/schemas/measurements';
import type { Criteria } from '../../shared/schemas/plans';
import { looksLikeFormula, parseMeasurementCsv } from '../../server/modules/measurements/csv-rows';
import { driftOfDevice, referredGain } from '../../server/modules/measurements/device-drift';
import { fitFigures, lotCore, planFit, type LotCoreInput } from '../../server/modules/analytics/lot-analysis';
import { csvCell } from '../../server/modules/reports/csv';

const criteria: Criteria = { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 };
const gain = { referenceC: 27, xtb: 1.5 };

describe('gain referred to the reference temperature', () => {
  it('β 153.9 measured at 127 °C is 100 at 27 °C with XTB 1.5 [pub: Gummel–Poon model as in SPICE]', () => {
    // REFERENCE.md §4 check: β 100 at 27 °C, XTB 1.5 → 153.9 at 127 °C.
    const r = referredGain(153.9, 127, gain);
    expect(r.normalised).toBe(true);
    expect(r.hfe!).toBeCloseTo(100, 1);
    expect(r.note).toMatch(/measured at 127 °C, referred to 27 °C with XTB 1.5/);
  });
  it('a reading within 0.5 °C of the reference is used as measured (common practice)', () => {
    expect(referredGain(120, 27.4, gain)).toEqual({ hfe: 120, normalised: false, note: null });
  });
});

describe('device drift across read points', () => {
  const r = (h: number, hfe: number, icboA: number, vcesatV = 0.2, measuredC = 27) => ({
    readPointH: h,
    hfe,
    icboA,
    vcesatV,
    measuredC,
    late: false,
  });

  it('first failed read point: ICBO 50 nA → 240 nA passes, 260 nA fails [pub: MIL-PRF-19500 slash-sheet delta limits]', () => {
    const d = driftOfDevice([r(0, 80, 50e-9), r(168, 80, 240e-9), r(500, 80, 260e-9), r(1000, 80, 100e-9)], criteria, gain);
    expect(d.status).toBe('fail');
    expect(d.firstFailedH).toBe(500);
    expect(d.readPoints.map((p) => p.pass)).toEqual([null, true, false, true]);
  });

  it('hFE 80 at ±15 % → band [68, 92]: 92 passes, 67.9 fails [pub: MIL-PRF-19500 slash-sheet delta limits]', () => {
    const d = driftOfDevice([r(0, 80, 1e-9), r(168, 92, 1e-9), r(500, 67.9, 1e-9)], criteria, gain);
    expect(d.readPoints[1].pass).toBe(true);
    expect(d.readPoints[2].failed).toEqual(['hfe']);
    expect(d.firstFailedH).toBe(500);
  });

  it('without a time-zero reading nothing is judged', () => {
    const d = driftOfDevice([r(168, 80, 1e-9)], criteria, gain);
    expect(d.status).toBe('no-time-zero');
    expect(d.readPoints[0].parameters).toBeNull();
  });

  it('a warm reading is referred before the change is taken, so pure temperature is not drift', () => {
    const warm = 100 * Math.pow((37 + 273.15) / (27 + 273.15), 1.5);
    const d = driftOfDevice([r(0, 100, 1e-9), r(168, warm, 1e-9, 0.2, 37)], criteria, gain);
    expect(d.readPoints[1].hfeNormalised).toBe(true);
    expect(d.readPoints[1].parameters![0].changePct!).toBeCloseTo(0, 6);
  });
});

/** A lot whose every device follows the same path: hFE change −rate × h / 1000 %. */
function lotInput(code: string, rate: number, measuredH: number[], state = 'finished', leakRatioPer1000h = 1.2): LotCoreInput {
  const devices: DeviceDriftView[] = Array.from({ length: 10 }, (_, i) => ({
    deviceId: `${code}-${i}`,
    serial: `${code.slice(-1)}${i}`,
    lotId: code,
    lotCode: code,
    socketIndex: i,
    ...driftOfDevice(
      measuredH.map((h) => ({
        readPointH: h,
        hfe: 100 * (1 + (rate * h) / 1000 / 100),
        icboA: 20e-9 * Math.pow(leakRatioPer1000h, h / 1000),
        vcesatV: 0.2,
        measuredC: 27,
        late: false,
      })),
      criteria,
      gain,
    ),
  }));
  return {
    lot: { id: code, code, deviceTypeId: 'type', partNumber: 'HPD-X', dateCode: '' },
    run: { id: `run-${code}`, code: `R-${code}`, state, stressHours: Math.max(...measuredH) },
    plan: {
      id: 'plan',
      name: 'HTRB',
      kind: 'htrb',
      durationH: 1000,
      acceptNumber: 0,
      sampleSize: 10,
      chamberC: 125,
      eaEv: 0.7,
      useC: 55,
      stressC: 125,
      stressBasis: 'chamber temperature',
      readPointsH: [0, 168, 500, 1000],
      criteria,
    },
    devices,
  };
}

describe('lot trend and pseudo-failure time', () => {
  it('hFE −2.1 / −6.0 / −12.2 % at 168 / 500 / 1000 h, line through origin → −20 % at 1644 h [pub: NIST e-Handbook §8.4.2.3]', () => {
    const hours = [0, 168, 500, 1000];
    const changes = [0, -2.1, -6.0, -12.2];
    const base = lotInput('HG0001-A', 0, hours);
    base.plan!.criteria = { ...criteria, hfeChangePct: 20 };
    base.devices = base.devices.map((d) => ({
      ...d,
      ...driftOfDevice(
        hours.map((h, k) => ({ readPointH: h, hfe: 100 * (1 + changes[k] / 100), icboA: 20e-9, vcesatV: 0.2, measuredC: 27, late: false })),
        base.plan!.criteria,
        gain,
      ),
    }));
    const core = lotCore(base);
    const hfe = core.trends.find((t) => t.parameter === 'hfe')!;
    expect(hfe.limit).toBe(-20);
    expect(hfe.pseudoFailureH!).toBeCloseTo(1644, -1);
  });

  it('ICBO typical-device limit is max(multiple, 1 + floor / I0): 20 nA → 11× (MIL-PRF-19500 deltas, our reading)', () => {
    const core = lotCore(lotInput('HG0001-B', -1, [0, 168, 500, 1000], 'finished', 3));
    const icbo = core.trends.find((t) => t.parameter === 'icbo')!;
    expect(icbo.limit).toBeCloseTo(11, 9);
    // ln(ratio) = ln 3 · h / 1000 → 11× at 1000 · ln 11 / ln 3 h.
    expect(icbo.pseudoFailureH!).toBeCloseTo((1000 * Math.log(11)) / Math.log(3), 3);
  });
});

// The lot verdict (sample, completeness, peers by prediction interval / individuals chart, degradation)
// is shared/verdict's judgeLot: tests/unit/verdict-judge.test.ts.

describe('FIT figures', () => {
  it('1 failure, 231 × 1000 h, 55 → 125 °C, 0.7 eV, 60 % → 112.8 FIT ±2 % [pub: JESD85]', () => {
    const f = fitFigures({ failures: 1, devices: 231, hoursEach: 1000, eaEv: 0.7, useC: 55, stressC: 125 });
    expect(Math.abs(f.fit60 / 112.8 - 1)).toBeLessThan(0.02);
    expect(f.chiSquare60).toBeCloseTo(4.0446, 3); // χ²(0.60; 4) [reference library: jstat]
    expect(f.constants).toMatchObject({ eaEv: 0.7, useC: 55, stressC: 125, source: 'CODATA 2018' });
  });

  it('from credited hours: 1 failure in 231,000 device-hours is the same 112.8 FIT, one device tripped early lowers the hours', () => {
    const plan = { kind: 'htrb' as const, eaEv: 0.7, useC: 55, chamberC: 125, humidityPct: null };
    const at125 = (h: number) => ({ creditedHours: h, segments: [{ hours: h, tjC: 125 }] });
    // [pub: JESD85] as above, device-hours summed per device
    const full = planFit({ plan, devices: Array.from({ length: 231 }, () => at125(1000)), failures: 1 }).fit!;
    expect(Math.abs(full.fit60 / 112.8 - 1)).toBeLessThan(0.02);
    expect(full.mechanism).toBe('temperature');
    // a socket tripped at 50 h credits 50 h, not 1,000 h: λ ∝ 1/Σ hours
    const devices = [...Array.from({ length: 230 }, () => at125(1000)), at125(50)];
    const tripped = planFit({ plan, devices, failures: 1 }).fit!;
    expect(tripped.deviceHours).toBeCloseTo(230_050, 6);
    expect(tripped.fit60 / full.fit60).toBeCloseTo(231_000 / 230_050, 10);
    expect(planFit({ plan, devices: [], failures: 0 }).fit).toBeNull();
  });
});

describe('CSV rows and cells', () => {
  it('formula-looking cells: = + - @ tab CR, but not plain signed numbers (OWASP CSV injection, common practice)', () => {
    for (const s of ['=1+1', '@SUM(A1)', '+cmd', '-cmd', '\t=x', '\rx']) expect(looksLikeFormula(s)).toBe(true);
    for (const s of ['-5e-9', '+12.5', '120', 'A001']) expect(looksLikeFormula(s)).toBe(false);
  });

  it('export cells get a leading quote when they could start a formula; numbers stay numbers', () => {
    expect(csvCell('=cmd')).toBe("'=cmd");
    expect(csvCell('-x')).toBe("'-x");
    expect(csvCell('@a,b')).toBe(`"'@a,b"`);
    expect(csvCell('\tA')).toBe("'\tA");
    expect(csvCell(-2.5)).toBe('-2.5');
    expect(csvCell('He said "hi"')).toBe('"He said ""hi"""');
  });

  it('rows report their file line; a semicolon file with a BOM parses; missing measured_at uses the upload time', () => {
    const now = new Date('2026-05-01T00:00:00Z');
    const text = '\uFEFFserial;hfe;hfe_ic_a;hfe_vce_v;icbo_na;icbo_vcb_v;vcesat_v\n\nA1;100;0.15;5;20;112;0.2\nA2;abc;0.15;5;20;112;0.2\n';
    const out = parseMeasurementCsv(Buffer.from(text), {
      mapping: {},
      defaultTempC: 25,
      now,
    });
    expect(out.rows.map((r) => r.row)).toEqual([3, 4]);
    expect(out.rows[0].values).toMatchObject({ icboA: 20e-9, measuredC: 25, measuredAt: now });
    expect(out.rows[1].reasons).toEqual(['hfe "abc" is not a number.']);
  });

  it('a measured_at without a zone is read as UTC; one in the future is refused', () => {
    const now = new Date('2026-05-01T00:00:00Z');
    const text =
      'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_a,icbo_vcb_v,vcesat_v,measured_at\nA1,100,0.15,5,2e-8,112,0.2,2026-04-30 10:00\nA2,100,0.15,5,2e-8,112,0.2,2026-06-01T00:00:00Z\n';
    const out = parseMeasurementCsv(Buffer.from(text), {
      mapping: {},
      defaultTempC: 25,
      now,
    });
    expect(out.rows[0].values!.measuredAt.toISOString()).toBe('2026-04-30T10:00:00.000Z');
    expect(out.rows[1].reasons[0]).toMatch(/lies in the future/);
  });
});
