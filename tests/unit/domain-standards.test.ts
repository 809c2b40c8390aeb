/** shared/domain: the standards' windows and the stress families, with the checks from the reference list. */
import { CHAMBER_TOLERANCE_PCT, MEASURE_WITHIN_H, isLateReading, measureByMs } from '../../shared/domain/standards';
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

describe('chamber band [pub: MIL-STD-750 general requirements §4.5 — ±3 % of set]', () => {
  it('set 125 °C → 121.25–128.75 °C', () => {
    expect(CHAMBER_TOLERANCE_PCT).toBe(3);
    const b = chamberBand(125);
    expect(b.lowC).toBeCloseTo(121.25, 10);
    expect(b.highC).toBeCloseTo(128.75, 10);
  });
});

describe('stress families [pub: JESD22-A108 and JESD22-A101 reverse bias; MIL-PRF-19500 group C life and MIL-STD-750 method 1037 powered]', () => {
  it('htrb and thb reverse-bias, hotl and iol powered', () => {
    expect(PLAN_KINDS.filter((k) => STRESS_FAMILY[k] === 'reverse-bias')).toEqual(['htrb', 'thb']);
    expect([...REVERSE_BIAS_KINDS]).toEqual(['htrb', 'thb']);
    expect(['htrb', 'hotl', 'iol', 'thb', 'tc'].map(isPoweredKindName)).toEqual([false, true, true, false, false]);
  });
});
