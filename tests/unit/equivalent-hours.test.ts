/**
 * Equivalent stress time from a temperature history and FIT per failure mechanism.
 * Check values: ../shared/REFERENCE.md, Addendum A4 and §3 (sources named beside each).
 */
import { jStat } from 'jstat';
import {
  addStressSegment,
  arrheniusFactor,
  equivalentHumidityHours,
  equivalentStressHours,
  type StressSegment,
} from '../../shared/reliability';
import {
  COFFIN_MANSON_USE_DELTA_TJ_C,
  FIELD_CYCLES_PER_DAY,
  MECHANISM_OF_KIND,
  PECK_USE_RH_PCT,
  equivalentCycles,
  mechanismExposure,
  mechanismFit,
  type DeviceExposure,
  type MechanismPlan,
} from '../../shared/reliability/mechanisms';
import { junctionFromTelemetry } from '../../shared/physics';
import { intervalSegments, type SocketSegments } from '../../server/modules/runs/stress-segments';

/** ±2 % on acceleration and FIT (REFERENCE.md: published examples differ in k and the kelvin offset). */
const within2pct = (actual: number, expected: number) => expect(Math.abs(actual / expected - 1)).toBeLessThanOrEqual(0.02);

describe('equivalentStressHours (Σ hours · AF(Tj), JEDEC JEP122; equivalent time is common practice)', () => {
  test('500 h at 125 °C = 89.36 h at 150 °C, Ea 1.0 eV [REFERENCE A4, calc from the Arrhenius formula]', () => {
    within2pct(equivalentStressHours({ segments: [{ hours: 500, tjC: 125 }], eaEv: 1.0, useC: 150 }), 89.36);
  });

  test('24 h@125 + 48 h@135 + 24 h@150 °C = 51.485 h at 150 °C, Ea 0.8 eV [REFERENCE A4, calc]', () => {
    const segments = [
      { hours: 24, tjC: 125 },
      { hours: 48, tjC: 135 },
      { hours: 24, tjC: 150 },
    ];
    within2pct(equivalentStressHours({ segments, eaEv: 0.8, useC: 150 }), 51.485);
  });

  test('a linear ramp 25 → 150 °C over 2 h = 0.3207 h at 150 °C, Ea 0.7 eV [REFERENCE A4, calc: ∫AF dt]', () => {
    const steps = 20_000;
    const segments = Array.from({ length: steps }, (_, i) => ({ hours: 2 / steps, tjC: 25 + (125 * (i + 0.5)) / steps }));
    within2pct(equivalentStressHours({ segments, eaEv: 0.7, useC: 150 }), 0.3207);
  });

  test('one segment equals hours × the Arrhenius factor: 1000 h at 125 °C from 55 °C, Ea 0.7 → 77.6 × 1000 [REFERENCE §3, JESD85 method]', () => {
    within2pct(equivalentStressHours({ segments: [{ hours: 1000, tjC: 125 }], eaEv: 0.7, useC: 55 }), 77_600);
  });

  test('no segments earn nothing; bad segments are refused', () => {
    expect(equivalentStressHours({ segments: [], eaEv: 0.7, useC: 55 })).toBe(0);
    expect(() => equivalentStressHours({ segments: [{ hours: -1, tjC: 125 }], eaEv: 0.7, useC: 55 })).toThrow(RangeError);
    expect(() => equivalentStressHours({ segments: [{ hours: 1, tjC: NaN }], eaEv: 0.7, useC: 55 })).toThrow(RangeError);
  });
});

describe('equivalentHumidityHours (Peck)', () => {
  test('1 h at 85 °C/85 % from 25 °C/60 %, n 3, Ea 0.9 eV = 1005.6 h [REFERENCE A4, calc; Hallberg & Peck 1991 parameters from memory]', () => {
    within2pct(equivalentHumidityHours({ segments: [{ hours: 1, tjC: 85, rhPct: 85 }], eaEv: 0.9, n: 3, useC: 25, rhUsePct: 60 }), 1005.6);
  });

  test('1 h at 85 °C/85 % from 30 °C/70 %, n 2.7, Ea 0.75 eV = 138.81 h [REFERENCE A4, calc; JEP122D parameters via a secondary source]', () => {
    within2pct(
      equivalentHumidityHours({ segments: [{ hours: 1, tjC: 85, rhPct: 85 }], eaEv: 0.75, n: 2.7, useC: 30, rhUsePct: 70 }),
      138.81,
    );
  });

  test('130 °C vs 85 °C at the same 85 % RH, Ea 0.9 eV: 25.92 × [REFERENCE A4, calc]', () => {
    const hot = equivalentHumidityHours({ segments: [{ hours: 1, tjC: 130, rhPct: 85 }], eaEv: 0.9, n: 3, useC: 25, rhUsePct: 60 });
    const std = equivalentHumidityHours({ segments: [{ hours: 1, tjC: 85, rhPct: 85 }], eaEv: 0.9, n: 3, useC: 25, rhUsePct: 60 });
    within2pct(hot / std, 25.92);
  });

  test('a stretch without a humidity reading earns nothing', () => {
    expect(equivalentHumidityHours({ segments: [{ hours: 10, tjC: 85 }], eaEv: 0.9, n: 3, useC: 25, rhUsePct: 60 })).toBe(0);
  });
});

describe('addStressSegment', () => {
  test('merges stretches of one bin with hour-weighted means; the Arrhenius sum stays within 0.01 % of the unmerged one', () => {
    const raw: StressSegment[] = [];
    const merged: StressSegment[] = [];
    // 0.1 h stretches wandering 144–146 °C (deterministic), plus one at 35 °C.
    for (let i = 0; i < 1000; i++) raw.push({ hours: 0.1, tjC: 145 + Math.sin(i / 7) });
    raw.push({ hours: 5, tjC: 35 });
    for (const s of raw) addStressSegment(merged, { ...s });
    expect(merged.length).toBeLessThan(10);
    const total = (xs: StressSegment[]) => xs.reduce((s, x) => s + x.hours, 0);
    expect(total(merged)).toBeCloseTo(total(raw), 9);
    const a = equivalentStressHours({ segments: raw, eaEv: 0.7, useC: 55 });
    const b = equivalentStressHours({ segments: merged, eaEv: 0.7, useC: 55 });
    expect(Math.abs(b / a - 1)).toBeLessThan(1e-4);
  });

  test('different humidity keeps separate segments', () => {
    const xs: StressSegment[] = [];
    addStressSegment(xs, { hours: 1, tjC: 85, rhPct: 85 });
    addStressSegment(xs, { hours: 1, tjC: 85, rhPct: 60 });
    addStressSegment(xs, { hours: 1, tjC: 85.1, rhPct: 85.2 });
    expect(xs).toHaveLength(2);
    expect(xs[0].hours).toBe(2);
    expect(xs[0].rhPct).toBeCloseTo(85.1, 9);
  });
});

describe('FIT per mechanism', () => {
  const htrb: MechanismPlan = { kind: 'htrb', eaEv: 0.7, useC: 55, chamberC: 125, humidityPct: null };

  test('each stress kind names one mechanism', () => {
    expect(MECHANISM_OF_KIND).toEqual({
      htrb: 'temperature',
      hotl: 'temperature',
      thb: 'humidity',
      iol: 'cycling',
      tc: 'thermal-cycling',
      htsl: 'storage',
      ac: 'unbiased-humidity',
    });
  });

  test('0 fails, 231 × 1000 h at 125 °C, 55 °C use, 0.7 eV: 51.1 FIT at 60 %, 128.4 at 90 % [REFERENCE §3, JESD85]', () => {
    const devices: DeviceExposure[] = Array.from({ length: 231 }, () => ({ creditedHours: 1000, segments: [{ hours: 1000, tjC: 125 }] }));
    const x = mechanismExposure(htrb, devices);
    expect(x.mechanism).toBe('temperature');
    expect(x.devicesFromTelemetry).toBe(231);
    const f = mechanismFit(x, 0)!;
    within2pct(f.f60.fit, 51.1);
    within2pct(f.f90.fit, 128.4);
    // with 1 failure at 60 % → 112.8 FIT [REFERENCE §3]
    within2pct(mechanismFit(x, 1)!.f60.fit, 112.8);
    // χ² quantiles against jstat (reference library): χ²(0.6; 2) and χ²(0.9; 2)
    expect(f.f60.chiSquare).toBeCloseTo(jStat.chisquare.inv(0.6, 2), 10);
    expect(f.f90.chiSquare).toBeCloseTo(4.6052, 4);
  });

  test('a heat-sunk device at 35 °C earns the Arrhenius ratio less than one credited at 145 °C (≈ 1000× at 0.7 eV)', () => {
    const hot = mechanismExposure(htrb, [{ creditedHours: 100, segments: [{ hours: 100, tjC: 145 }] }]);
    const cool = mechanismExposure(htrb, [{ creditedHours: 100, segments: [{ hours: 100, tjC: 35 }] }]);
    // independent: the ratio is AF(145 °C)/AF(35 °C) = exp[(Ea/k)(1/308.15 − 1/418.15)] (Arrhenius, JEP122)
    const ratio = Math.exp((0.7 / 8.617333e-5) * (1 / 308.15 - 1 / 418.15));
    within2pct(hot.equivalentDeviceHours / cool.equivalentDeviceHours, ratio);
    expect(ratio).toBeGreaterThan(900);
    expect(ratio).toBeLessThan(1100);
  });

  test('credited hours without a junction record count at the chamber temperature, and say so', () => {
    const x = mechanismExposure(htrb, [
      { creditedHours: 100, segments: null },
      { creditedHours: 100, segments: [{ hours: 60, tjC: 150 }] },
    ]);
    expect(x.devicesFromChamber).toBe(1);
    expect(x.devicesFromTelemetry).toBe(1);
    const expected =
      140 * arrheniusFactor({ eaEv: 0.7, useC: 55, stressC: 125 }) + 60 * arrheniusFactor({ eaEv: 0.7, useC: 55, stressC: 150 });
    expect(x.equivalentDeviceHours).toBeCloseTo(expected, 6);
    expect(x.tjMinC).toBe(125);
    expect(x.tjMaxC).toBe(150);
  });

  test('THB uses Peck at the junction and the chamber humidity; the model parameters are named', () => {
    const thb: MechanismPlan = { kind: 'thb', eaEv: 0.9, useC: 25, chamberC: 85, humidityPct: 85 };
    const x = mechanismExposure(thb, [{ creditedHours: 1, segments: [{ hours: 1, tjC: 85, rhPct: 85 }] }]);
    expect(x.mechanism).toBe('humidity');
    expect(x.parameters.map((p) => p.name)).toEqual(['Ea', 'use temperature', 'n', 'use humidity']);
    // Peck at n 2.66 from 25 °C/60 % to 85 °C/85 %, Ea 0.9: (85/60)^2.66 × Arrhenius(0.9 eV, 25 → 85 °C)
    expect(PECK_USE_RH_PCT).toBe(60);
    const expected = Math.pow(85 / 60, 2.66) * arrheniusFactor({ eaEv: 0.9, useC: 25, stressC: 85 });
    expect(x.equivalentDeviceHours).toBeCloseTo(expected, 6);
    // with n 3 the same inputs give REFERENCE A4's 1005.6: the exponent is the only difference
    within2pct((x.equivalentDeviceHours * Math.pow(85 / 60, 3)) / Math.pow(85 / 60, 2.66), 1005.6);
  });

  describe('power cycling (Coffin–Manson), against generated cycle records', () => {
    const iol: MechanismPlan = { kind: 'iol', eaEv: 0.7, useC: 55, chamberC: 25, humidityPct: null };

    test('ΔT 215 vs 50 K, q 1.9 → 15.98 equivalent cycles per cycle [REFERENCE A4, calc]', () => {
      within2pct(equivalentCycles([{ creditedHours: 1, segments: null, cycling: { cycles: 1, deltaTjC: 215 } }], 1.9, 50)!, 15.98);
    });

    test('ΔT 180 vs 100 K, m 2 → 3.24 [REFERENCE §3, NIST e-Handbook §8.1.5 formula]', () => {
      within2pct(equivalentCycles([{ creditedHours: 1, segments: null, cycling: { cycles: 1, deltaTjC: 180 } }], 2, 100)!, 3.24);
    });

    test('devices with cycles: field hours = Σ cycles·(ΔTj/ΔT_use)^m × 24 / cycles per day', () => {
      // generated: 45 devices, 15,000 cycles each at a swing of 100–122 K
      const devices: DeviceExposure[] = Array.from({ length: 45 }, (_, i) => ({
        creditedHours: 1000,
        segments: null,
        cycling: { cycles: 15_000, deltaTjC: 100 + (i % 12) * 2 },
      }));
      const x = mechanismExposure(iol, devices);
      const eqCycles = devices.reduce((s, d) => s + d.cycling!.cycles * Math.pow(d.cycling!.deltaTjC / COFFIN_MANSON_USE_DELTA_TJ_C, 2), 0);
      expect(x.unavailable).toBeNull();
      expect(x.equivalentDeviceHours).toBeCloseTo((eqCycles * 24) / FIELD_CYCLES_PER_DAY, 3);
      const f = mechanismFit(x, 0)!;
      // χ²(0.6; 2)/(2 · Σ field hours) × 1e9, χ² from jstat
      expect(f.f60.fit).toBeCloseTo((jStat.chisquare.inv(0.6, 2) / (2 * x.equivalentDeviceHours)) * 1e9, 9);
    });

    test('a device without a cycle record makes the cycling FIT unavailable, never an hours-based one', () => {
      const x = mechanismExposure(iol, [
        { creditedHours: 1000, segments: null, cycling: { cycles: 15_000, deltaTjC: 100 } },
        { creditedHours: 1000, segments: null },
      ]);
      expect(x.unavailable).toMatch(/not recorded/);
      expect(mechanismFit(x, 0)).toBeNull();
    });
  });
});

describe('the junction behind the credit', () => {
  test('Tj = T_case + θjc·|V·I|: 30 °C case, 12 W, θjc 4.181 K/W → 80.17 °C [REFERENCE A7, JESD51-1 / JEDEC dictionary]', () => {
    expect(junctionFromTelemetry({ caseC: 30, vV: 12, iA: 1, thetaJcCPerW: 4.181 })).toBeCloseTo(80.17, 2);
  });

  test('reverse bias: 560 V × 2 µA leakage through θjc 10 K/W adds 0.0112 K, so Tj ≈ the socket temperature (JESD51 definition)', () => {
    expect(junctionFromTelemetry({ caseC: 145, vV: -560, iA: 2e-6, thetaJcCPerW: 10 }) - 145).toBeCloseTo(0.0112, 6);
  });

  test('an interval is credited at the mean of the junction at both ends, with the chamber humidity for humidity plans', () => {
    const into: SocketSegments = { thetaJc: new Map([[0, 5]]), bySocket: new Map() };
    const sample = (seq: number, caseC: number, rh: number) => ({
      seq,
      clockS: seq * 900,
      chamberC: 85,
      humidityPct: rh,
      sockets: [{ socket: 0, vV: 10, iA: 0.2, biasOn: true, tripped: false, caseC }],
    });
    // ends: 30 + 5·2 = 40 °C and 34 + 5·2 = 44 °C → 42 °C over 0.25 h; RH (84 + 86)/2 = 85 %
    intervalSegments(into, sample(1, 30, 84), sample(2, 34, 86), new Map([[0, 900]]), true);
    expect(into.bySocket.get(0)).toEqual([{ hours: 0.25, tjC: 42, rhPct: 85 }]);
    // a socket with no case reading adds nothing (its hours fall back on the chamber in the FIT)
    const noCase = { seq: 3, clockS: 2700, chamberC: 85, humidityPct: 85, sockets: [{ socket: 0, vV: 10, biasOn: true, tripped: false }] };
    intervalSegments(into, sample(2, 34, 86), noCase, new Map([[0, 900]]), true);
    expect(into.bySocket.get(0)).toHaveLength(1);
    expect(into.bySocket.get(0)![0].hours).toBe(0.25);
  });
});
