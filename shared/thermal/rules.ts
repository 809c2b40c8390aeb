/**
 * The socket thermal model's rules, declared once (the server's tracker, protection and the
 * screens import them). Emberlot's choices unless a source is named.
 */

/**
 * A socket's case-to-ambient θ that has risen by more than this fraction above its own first good
 * identification in the run is flagged (alarm kind 'thermal-path'). Emberlot's choice: a 25 % rise
 * is well outside the ±10 % the identification itself recovers (tests/unit/thermal-identify.test.ts),
 * and on a 2 °C/W heat sink it is 0.5 °C/W — 4 K more at 8 W, long before protection's 10 K margin.
 */
export const THERMAL_PATH_RISE_FRACTION = 0.25;

/**
 * The baseline (the socket's "own first identification") is taken once this many consecutive good
 * identifications agree within BASELINE_AGREE_FRACTION (their median): a heat-up still under way
 * reads low and climbing, and must not become the reference a healthy socket is later flagged
 * against. Emberlot's choice.
 */
export const BASELINE_AGREE_FITS = 3;
export const BASELINE_AGREE_FRACTION = 0.1;

/** Consecutive good identifications above the limit before the flag is raised (one noisy window is not a trend). */
export const THERMAL_PATH_CONFIRM_FITS = 2;

/**
 * A fit is good enough to be used (flag baseline, protection) when its output-error RMS is at most
 * this many kelvin or this fraction of the mean rise above ambient, whichever is larger, and (with a
 * transient in the window) R² of the simulated response is at least GOOD_FIT_MIN_R2. Emberlot's choice.
 */
export const GOOD_FIT_MAX_RMS_K = 0.5;
export const GOOD_FIT_MAX_RMS_FRACTION = 0.05;
export const GOOD_FIT_MIN_R2 = 0.9;

/** Below these the step is too small to identify: mean socket power (W) and mean rise above ambient (K). */
export const MIN_IDENTIFY_POWER_W = 0.2;
export const MIN_IDENTIFY_RISE_K = 1;
/** Fewest samples in a window. */
export const MIN_IDENTIFY_SAMPLES = 6;

/**
 * Which θca protection uses. Protection's loop gain θ·∂P/∂Tj grows with θ, so a larger θca trips
 * sooner: the identified value may only *raise* the θca protection uses (and the bound θja − θjc
 * it is clipped to), never lower it. A socket whose heat path is better than its data sheet keeps
 * the sheet's conservative figures; a degrading one gets its worse, measured one.
 */
export function protectionThetaCa(p: {
  /** θca fitted in protection's own look-back window, or null. */
  windowThetaCa: number | null;
  /** θja − θjc from the data sheet (the bound). */
  ratedBoundThetaCa: number;
  /** The socket's latest good identification, or null. */
  identifiedThetaCa: number | null;
}): { thetaCa: number | null; bound: number; source: 'window' | 'identified' | 'none' } {
  const id = p.identifiedThetaCa !== null && Number.isFinite(p.identifiedThetaCa) && p.identifiedThetaCa > 0 ? p.identifiedThetaCa : null;
  const bound = id === null ? p.ratedBoundThetaCa : Math.max(p.ratedBoundThetaCa, id);
  const win = p.windowThetaCa === null || !Number.isFinite(p.windowThetaCa) ? null : Math.min(bound, Math.max(0, p.windowThetaCa));
  if (id !== null && (win === null || id > win)) return { thetaCa: id, bound, source: 'identified' };
  return { thetaCa: win, bound, source: win === null ? 'none' : 'window' };
}
