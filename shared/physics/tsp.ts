/**
 * Junction temperature from a temperature-sensitive parameter (TSP): the base-emitter voltage at a
 * small sense current falls almost linearly with temperature (≈ −2 mV/K for silicon), so once the
 * slope is calibrated in an oven the junction's temperature can be read electrically the moment
 * heating power is removed [pub: JESD51-1, electrical test method; MIL-STD-750 method 3131].
 * Pure; compiles for the app and the server.
 */

/** A calibrated TSP: the voltage v0V at t0C and the slope (V per K, negative for VBE). */
export interface TspCalibration {
  v0V: number;
  t0C: number;
  slopeVPerK: number;
}

/** Silicon VBE at a small sense current falls about this much per kelvin [pub: JESD51-1 (typical −2 mV/K)]. */
export const TYPICAL_VBE_SLOPE_V_PER_K = -0.002;

/**
 * The TSP's slope from a two-point oven calibration: (v2 − v1) / (t2 − t1).
 * Throws when the two temperatures are equal or the slope is zero (nothing can be read from it).
 */
export function tspSlope(p: { v1V: number; t1C: number; v2V: number; t2C: number }): number {
  if (p.t2C === p.t1C) throw new Error('A TSP calibration needs two different temperatures');
  const slope = (p.v2V - p.v1V) / (p.t2C - p.t1C);
  if (!Number.isFinite(slope) || slope === 0) throw new Error('A TSP calibration needs a voltage that changes with temperature');
  return slope;
}

/** Junction temperature from a TSP reading: Tj = T0 + (V − V0) / slope [pub: JESD51-1]. */
export function junctionFromTsp(vV: number, cal: TspCalibration): number {
  return cal.t0C + (vV - cal.v0V) / cal.slopeVPerK;
}

/** The TSP voltage a junction at tjC shows (the inverse of junctionFromTsp; the simulator's sensor). */
export function tspAt(tjC: number, cal: TspCalibration): number {
  return cal.v0V + cal.slopeVPerK * (tjC - cal.t0C);
}

/** The junction swing of one power cycle from the TSP read at the end of the on-time and of the off-time. */
export function swingFromTsp(hotV: number, coldV: number, cal: TspCalibration): number {
  return junctionFromTsp(hotV, cal) - junctionFromTsp(coldV, cal);
}
