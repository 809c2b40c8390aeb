/**
 * The leakage doubling step from two data-sheet points, in a module of its own so the device page
 * shows it without loading the rest of shared/physics.
 */

/** Temperature step per doubling from two points: (t2 − t1)·ln2 / ln(i2/i1) (°C per doubling). */
export function leakageDoublingC(p: { i1A: number; t1C: number; i2A: number; t2C: number }): number {
  return ((p.t2C - p.t1C) * Math.LN2) / Math.log(p.i2A / p.i1A);
}
