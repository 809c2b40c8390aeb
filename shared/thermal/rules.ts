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

/**
 * The trend rule (issue "See the verdict coming", item 2): a pad that dries slowly crosses the step
 * rule's line late, so the socket is also flagged when its θ is rising significantly and is on course
 * to cross that same line (baseline × (1 + THERMAL_PATH_RISE_FRACTION)) soon.
 *
 * Input: the socket's good identifications after its baseline was set, one per identification window
 * that does not overlap the previous one (their sensor noise is then independent), hours under stress
 * (the rig's stress clock) against θ. At most TREND_MAX_FITS are kept: beyond, every other one is
 * dropped and the spacing doubles, so the whole run stays covered.
 * - Slope: Theil–Sen, the median of all pairwise slopes [pub: Sen, JASA 63 (1968) 1379–1389; Theil
 *   1950], with Sen's distribution-free interval at TREND_INTERVAL_CONFIDENCE (his eq. 2.6 variance,
 *   index rounding as scipy.stats.theilslopes).
 * - Significance: the Mann–Kendall test [pub: Mann, Econometrica 13 (1945) 245–259; Kendall, Rank
 *   Correlation Methods]: S = Σ sign(θj − θi), Var(S) = [n(n−1)(2n+5) − Σ t(t−1)(2t+5)]/18 (ties t),
 *   Z = (S − 1)/√Var(S) for S > 0 (continuity correction), normal approximation, one-sided at
 *   TREND_ALPHA.
 * - Projection: the Theil–Sen line through the median of θ − slope·t, from the newest fit forward to
 *   the step rule's line; it must be reached within the horizon: TREND_HORIZON_H, no more than
 *   TREND_MAX_EXTRAPOLATION × the hours the fits span, and not after the run's planned end.
 * - Raised after THERMAL_PATH_CONFIRM_FITS firing evaluations in a row, cleared after as many quiet ones.
 * The methods are published; every threshold below is Emberlot's choice.
 */
/** One-sided level of the Mann–Kendall test (Emberlot's choice). */
export const TREND_ALPHA = 0.05;
/** Φ⁻¹(1 − TREND_ALPHA): the test's critical Z, also the half-width factor of the slope interval (checked against jstat). */
export const TREND_Z = 1.6448536269514722;
/** The slope interval shown: two-sided 1 − 2·TREND_ALPHA, so its lower bound above 0 matches the one-sided test. */
export const TREND_INTERVAL_CONFIDENCE = 1 - 2 * TREND_ALPHA;
/** Fewest fits for a trend: the normal approximation of S is usually taken as adequate from n ≈ 10 (Gilbert 1987, ch. 16 — from memory). */
export const TREND_MIN_FITS = 10;
/** Most fits kept for a trend (pairs grow as n²: 64 fits are 2016 slopes). Emberlot's choice. */
export const TREND_MAX_FITS = 64;
/**
 * A fit joins the trend only when its window starts at least this many identification windows after
 * the latest bias-on or power step: before that the case is still settling and reads low and climbing
 * (a sound socket with a 150 s case lag and 200 s windows read 12 % low for ~0.2 h after bias-on and
 * again after a read-point break: tests/broker/protection-healthy.test.ts). 4 windows are ≥ 5 τ
 * whenever a window spans ≥ 1.25 τ. Emberlot's choice.
 */
export const TREND_SETTLE_WINDOWS = 4;
/** Farthest projection in stress hours (about half a 1000 h life test). Emberlot's choice. */
export const TREND_HORIZON_H = 500;
/** Project no further than this many times the hours the fits span. Emberlot's choice. */
export const TREND_MAX_EXTRAPOLATION = 4;
