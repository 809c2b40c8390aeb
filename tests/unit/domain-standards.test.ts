/** shared/domain: the standards' windows and the stress families, with the checks from the reference list. */
import {
  METHOD_CHAMBER_BAND_K,
  MEASURE_WITHIN_H,
  bandText,
  chamberSetpointC,
  isLateReading,
  measureByMs,
} from '../../shared/domain/standards';
import { PLAN_KINDS, REVERSE_BIAS_KINDS, STRESS_FAMILY, isPoweredKindName } from '../../shared/domain/stress';
import { chamberBand } from '../../shared/scheduling';

const H = 3_600_000;

describe('measuring window [pub: MIL-STD-883 method 1008.2; MIL-PRF-19500/308D — within 96 h of removing bias]', () => {
  it('removed at t0, measured at t0 + 97 h → late; at t0 + 96 h → in time', () => {
    const t0 = Date.UTC(2026, 2, 2, 8, 0);
    expect(MEASURE_WITHIN_H).toBe(96);
    expect(isLateReading(t0, t0 + 97 * H)).toBe(true);
    expect(isLateReading(t0, t0 + 96 * H)).toBe(false);
    expect(measureByMs(t0)).toBe(t0 + 96 * H);
  });
});

describe('chamber band in kelvin, per method', () => {
  it('HTRB: the stress temperature is a minimum, +5/−0 K [memory: JESD22-A108 / MIL-STD-750 — confirm]', () => {
    expect(METHOD_CHAMBER_BAND_K.htrb).toEqual({ belowK: 0, aboveK: 5 });
    const b = chamberBand(150, METHOD_CHAMBER_BAND_K.htrb);
    expect(b).toEqual({ lowC: 150, highC: 155 });
    // the rig is aimed at the middle of the band, above the minimum
    expect(chamberSetpointC(150, METHOD_CHAMBER_BAND_K.htrb)).toBe(152.5);
    expect(bandText(METHOD_CHAMBER_BAND_K.htrb)).toBe('+5/−0 K');
  });
  it('THB: 85 ± 2 °C [memory: JESD22-A101 — confirm]; a symmetric band keeps the set point', () => {
    expect(METHOD_CHAMBER_BAND_K.thb).toEqual({ belowK: 2, aboveK: 2 });
    expect(chamberSetpointC(85, METHOD_CHAMBER_BAND_K.thb)).toBe(85);
    expect(bandText(METHOD_CHAMBER_BAND_K.thb)).toBe('± 2 K');
  });
});

describe('stress families [pub: JESD22-A108 and JESD22-A101 reverse bias; MIL-PRF-19500 group C life and MIL-STD-750 method 1037 powered]', () => {
  it('htrb and thb reverse-bias, hotl and iol powered', () => {
    expect(PLAN_KINDS.filter((k) => STRESS_FAMILY[k] === 'reverse-bias')).toEqual(['htrb', 'thb']);
    expect([...REVERSE_BIAS_KINDS]).toEqual(['htrb', 'thb']);
    expect(['htrb', 'hotl', 'iol', 'thb', 'tc'].map(isPoweredKindName)).toEqual([false, true, true, false, false]);
  });
});
