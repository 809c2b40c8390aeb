/** shared/physics: leakage from two data-sheet points, and the forward safe operating area of a bipolar part. */
import {
  diffusionLeakageRatio,
  forwardSoaLimit,
  hotPointLeakage,
  leakageDoublingC,
  sbKneeFromPoint,
  sbSlopeFromPoints,
  secondBreakdownCurrent,
} from '../../shared/physics';
import { SB_DERATING_AT_TJMAX } from '../../shared/domain/standards';

describe('leakage doubling from two points [calc, REFERENCE A5: ΔT_double = (T2−T1)·ln2/ln(I2/I1)]', () => {
  test('2 nA at 25 °C, 1.5 µA at 125 °C → 10.47 °C per doubling', () => {
    expect(leakageDoublingC({ i1A: 2e-9, t1C: 25, i2A: 1.5e-6, t2C: 125 })).toBeCloseTo(10.47, 2);
  });
  test('a tenfold rise over 33.22 °C is one doubling per 10 °C (common practice: the 10 °C rule)', () => {
    expect(leakageDoublingC({ i1A: 1e-9, t1C: 25, i2A: 1e-8, t2C: 25 + 10 * Math.log2(10) })).toBeCloseTo(10, 10);
  });
});

describe('diffusion leakage ∝ n_i² ∝ T³·exp(−Eg/kT), Eg 1.12 eV [calc, REFERENCE A5; Sze from memory — confirm]', () => {
  test('25 → 125 °C: ×1.355e5; 125 → 150 °C: ×8.259', () => {
    expect(diffusionLeakageRatio(25, 125) / 1.355e5).toBeCloseTo(1, 2);
    expect(diffusionLeakageRatio(125, 150)).toBeCloseTo(8.259, 2);
  });
});

describe('leakage from the hot point', () => {
  const hot = { iA: 1.5e-6, tC: 125, vcbV: 100 };
  const ref = { iA: 2e-9, tC: 25 };
  test('passes through both points and doubles every 10.47 °C between them [calc, REFERENCE A5]', () => {
    const m = hotPointLeakage({ hot, ref, vcbV: 100, fallbackDoublingC: 10 });
    expect(m.doublingC).toBeCloseTo(10.47, 2);
    expect(m.leakageAtC(125)).toBeCloseTo(1.5e-6, 15);
    expect(m.leakageAtC(25) / 2e-9).toBeCloseTo(1, 10);
    expect(m.leakageAtC(125 - m.doublingC)).toBeCloseTo(0.75e-6, 15);
  });
  test('above the hot point it follows the steeper diffusion law: 125 → 150 °C ×8.259, not ×5.233 [calc, REFERENCE A5]', () => {
    const m = hotPointLeakage({ hot, ref, vcbV: 100, fallbackDoublingC: 10 });
    expect(m.leakageAtC(150) / 1.5e-6).toBeCloseTo(8.259, 2);
    // the two-point law alone would give (1.5 µA / 2 nA)^(25/100) = 750^0.25 = 5.233 [calc]
    expect(Math.pow(2, 25 / m.doublingC)).toBeCloseTo(5.233, 3);
  });
  test('a higher plan VCB scales the point by √(V/V_point); a lower one never scales down [memory: generation current ∝ depletion width ∝ √V, Sze — confirm]', () => {
    expect(hotPointLeakage({ hot, ref, vcbV: 400, fallbackDoublingC: 10 }).voltageFactor).toBeCloseTo(2, 12);
    expect(hotPointLeakage({ hot, ref, vcbV: 400, fallbackDoublingC: 10 }).leakageAtC(125)).toBeCloseTo(3e-6, 15);
    expect(hotPointLeakage({ hot, ref, vcbV: 50, fallbackDoublingC: 10 }).voltageFactor).toBe(1);
  });
  test('the hot point alone uses the common-practice step below it', () => {
    const m = hotPointLeakage({ hot, ref: null, vcbV: 100, fallbackDoublingC: 10 });
    expect(m.doublingC).toBe(10);
    expect(m.leakageAtC(115)).toBeCloseTo(0.75e-6, 15);
  });
});

describe('forward SOA [calc, REFERENCE A6: 100 W, Tj max 175 °C; S/b 3 A at 30 V, 0.5 A at 80 V]', () => {
  const n = sbSlopeFromPoints({ i1A: 3, v1V: 30, i2A: 0.5, v2V: 80 });
  const knee = sbKneeFromPoint({ iA: 3, vV: 30, n, pMaxW: 100 });
  const part = { icMaxA: 10, pMaxW: 100, pRatedAtC: 25, tjMaxC: 175, thetaJcCPerW: 1.5, kneeV: knee, slopeN: n };
  test('slope n 1.8268, knee 26.41 V / 3.786 A; θjc = (175 − 25)/100 = 1.5 K/W', () => {
    expect(n).toBeCloseTo(1.8268, 4);
    expect(knee).toBeCloseTo(26.41, 2);
    expect(100 / knee).toBeCloseTo(3.786, 3);
    expect((175 - 25) / 100).toBe(part.thetaJcCPerW);
    // the line still passes through its data-sheet points
    expect(secondBreakdownCurrent({ vceV: 80, kneeV: knee, slopeN: n, pMaxW: 100 })).toBeCloseTo(0.5, 10);
    expect(secondBreakdownCurrent({ vceV: 20, kneeV: knee, slopeN: n, pMaxW: 100 })).toBe(Infinity);
  });
  test('40 V, Tc 100 °C, k_sb 0.75 → IC max 10 A, thermal 1.25 A, S/b 1.330 A → 1.25 A (thermal)', () => {
    const l = forwardSoaLimit({ ...part, vceV: 40, tCaseC: 100, sbAtTjMax: SB_DERATING_AT_TJMAX });
    // [practice] S/b derating linear to 50 % at Tj max gives the reference's k_sb 0.75 at 100 °C
    expect(l.sbDerating).toBeCloseTo(0.75, 12);
    expect(l.thermalA).toBeCloseTo(1.25, 12);
    expect(l.sbA).toBeCloseTo(1.33, 3);
    expect(l.allowedA).toBeCloseTo(1.25, 12);
    expect(l.limitedBy).toBe('thermal');
  });
  test('60 V, Tc 25 °C → 0.8457 A (S/b)', () => {
    const l = forwardSoaLimit({ ...part, vceV: 60, tCaseC: 25, sbAtTjMax: SB_DERATING_AT_TJMAX });
    expect(l.sbDerating).toBe(1);
    expect(l.allowedA).toBeCloseTo(0.8457, 4);
    expect(l.limitedBy).toBe('second-breakdown');
  });
  test('low VCE: IC max binds (5 V, 25 °C: thermal 20 A, no S/b)', () => {
    const l = forwardSoaLimit({ ...part, vceV: 5, tCaseC: 25, sbAtTjMax: SB_DERATING_AT_TJMAX });
    expect(l.allowedA).toBe(10);
    expect(l.limitedBy).toBe('ic-max');
  });
});
