/**
 * The verdict forecast's rules, declared once. No statistics imports: screens read these constants
 * without loading jstat.
 */

/**
 * A forecast is "certain enough" when the chance of passing is at least this, or at most 1 − this
 * (common practice: the 95 % level of a one-sided decision; the product owner's choice for issue #25).
 */
export const FORECAST_CERTAINTY = 0.95;

/** The two-sided level of the interval on the predicted number of failures (5th to 95th percentile). */
export const FORECAST_INTERVAL = 0.9;

/**
 * Simulated lots per forecast. With 2000 the Monte Carlo standard error of a chance of passing is at
 * most √(0.25/2000) = 1.1 percentage points (binomial standard error, common practice).
 */
export const FORECAST_SIMULATIONS = 2000;

/** The simulation's seed: a forecast of the same evidence is the same number every time. */
export const FORECAST_SEED = 25_2026;

/**
 * Read points after time zero needed before a forecast is made: with one, each device has one
 * point on its path, and the spread of the slopes cannot be told apart from measurement noise
 * (Lu & Meeker 1993 need a residual variance from each path).
 */
export const FORECAST_MIN_READ_POINTS = 2;

/** The chance of passing below which the engineer is told, unless the lab sets its own (lab settings). */
export const FORECAST_ALERT_DEFAULT = 0.5;

/**
 * The alert levels one may set (the lab's and each engineer's own): a level of 0 or 1 would never or
 * always fire. The product's choice for issue #25; the migrations' CHECK constraints repeat it.
 */
export const FORECAST_ALERT_MIN = 0.01;
export const FORECAST_ALERT_MAX = 0.99;

/**
 * The level an engineer is told at: their own (null when they turned the alert off), else the lab's
 * — the lab's only while their read-point notices are on, as before engineers had levels of their own.
 */
export function effectiveAlertLevel(
  own: { set: false } | { set: true; below: number | null },
  labBelow: number,
  notifyReadPoints: boolean,
): number | null {
  if (own.set) return own.below;
  return notifyReadPoints ? labBelow : null;
}

/** Calibration bins of the back-test: predicted chance of passing in [0, 0.1), [0.1, 0.3), … [0.9, 1]. */
export const BACKTEST_BINS: readonly number[] = [0, 0.1, 0.3, 0.5, 0.7, 0.9, 1];

/** The words a screen uses for a forecast's state. */
export const FORECAST_STATE_LABEL = {
  forecast: 'Forecast',
  final: 'Final',
  'not-enough-data': 'Not enough data',
  'no-drift-data': 'No drift readings',
} as const;
export type ForecastState = keyof typeof FORECAST_STATE_LABEL;

/** "certain to pass" / "certain to fail" / null: where a chance of passing stands against FORECAST_CERTAINTY. */
export function certainty(pPass: number | null): 'pass' | 'fail' | null {
  if (pPass === null) return null;
  if (pPass >= FORECAST_CERTAINTY) return 'pass';
  if (pPass <= 1 - FORECAST_CERTAINTY) return 'fail';
  return null;
}
