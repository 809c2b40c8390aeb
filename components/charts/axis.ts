/**
 * Axis arithmetic the charts share, kept apart from victory so it can be unit-tested and stays out
 * of the screens' chunks.
 */

/** Rough width of a tick label in the chart font (Lexend at 12 px: digits ≈ 0.62 em). */
export const labelWidth = (label: string, fontSize = 12): number => label.length * fontSize * 0.62;

/**
 * Right padding so the last x tick label (centred on the axis end) fits inside the chart:
 * half its width and a small margin, never less than `min`. "1000" at 12 px needs ≈ 21 px.
 */
export function endPadding(lastLabel: string, min: number, fontSize = 12): number {
  return Math.max(min, Math.ceil(labelWidth(lastLabel, fontSize) / 2 + 6));
}

/**
 * A y domain that always contains 0, for quantities read from zero: drifts (hFE change %,
 * VCE(sat) shift) and ratios (ICBO / initial). A quantity that cannot go negative (`floorAtZero`,
 * e.g. a leakage ratio) starts at exactly 0; a drift gets the same margin both ways.
 */
export function domainWithZero(values: number[], { floorAtZero = false, padFraction = 0.08 } = {}): [number, number] {
  const finite = values.filter(Number.isFinite);
  const lo = Math.min(0, ...finite);
  const hi = Math.max(0, ...finite);
  const pad = (hi - lo) * padFraction || 1;
  return [floorAtZero && lo >= 0 ? 0 : lo - pad, hi + pad];
}
