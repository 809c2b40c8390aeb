/**
 * The test standards' windows and tolerances, and the trade's defaults — declared once, each with
 * its source (tags as in the project's reference list: [pub: …] published, [practice] common
 * practice, [memory] recalled, not checked against the text).
 */

const H_MS = 3_600_000;

/**
 * Electrical measurements within 96 h of removing bias, else the parts go back on stress first
 * [pub: MIL-STD-883 method 1008.2; MIL-PRF-19500/308D §4.5.1 — end-points within 96 h]
 * [memory: JESD22-A108 states the same window; wording not checked].
 */
export const MEASURE_WITHIN_H = 96;
/** When measurements for a read point fall due: bias removal + MEASURE_WITHIN_H. */
export const measureByMs = (biasRemovedAtMs: number): number => biasRemovedAtMs + MEASURE_WITHIN_H * H_MS;
/** A reading taken after the window: late (check: removed at t0, measured at t0 + 97 h → late). */
export const isLateReading = (biasRemovedAtMs: number, measuredAtMs: number): boolean =>
  measuredAtMs - biasRemovedAtMs > MEASURE_WITHIN_H * H_MS;

/** Chamber held within ± this percent of its set temperature [pub: MIL-STD-750 general requirements §4.5]. */
export const CHAMBER_TOLERANCE_PCT = 3;
/** Humidity held within ± this many % RH of set [memory: JESD22-A101, 85 °C / 85 ± 5 % RH]. */
export const HUMIDITY_TOLERANCE_RH = 5;
/** The chamber must reach its set ambient within this many stress hours [pub: MIL-STD-750 general requirements §4.5]. */
export const AMBIENT_WITHIN_H = 5;
/** Room ambient: where powered stresses start and where a finished run cools to [practice]. */
export const ROOM_AMBIENT_C = 25;

/** Read points of a stress (hours) [practice: 0 / 168 / 500 / 1000 h]. */
export const DEFAULT_READ_POINTS_H: readonly number[] = [0, 168, 500, 1000];
/** Stress duration of the standards' life tests [pub: JESD22-A108; MIL-PRF-19500 group C life; JESD22-A101 — 1000 h]. */
export const DEFAULT_DURATION_H = 1000;
/** Reverse bias as a fraction of the rated breakdown [pub: JESD22-A108; AEC-Q101 test table — 80 %]. */
export const REVERSE_BIAS_FRACTION = 0.8;
/**
 * A rig's hardware-interlock test (door, over-temperature cut-out, high-voltage discharge) counts
 * for this many days; a run may not start on a rig whose last test is older (Emberlot's default,
 * not from a standard: the lab's own safety rules set the interval and may ask for more).
 */
export const INTERLOCK_TEST_VALID_DAYS = 30;
const DAY_MS = 86_400_000;
/** The last moment an interlock test done at `testedAt` still counts (check: tested 2026-01-01 → until 2026-01-31 00:00 UTC). */
export const interlockDueAt = (testedAt: Date): Date => new Date(testedAt.getTime() + INTERLOCK_TEST_VALID_DAYS * DAY_MS);
/** A calibration due on a day still counts through the end of that day (UTC). */
export const calibrationExpiresAt = (dueAt: Date): Date => new Date(dueAt.getTime() + DAY_MS);
/** Bias band for hour accrual, ± percent of set (Emberlot's default, not from a standard). */
export const DEFAULT_BIAS_TOLERANCE_PCT = 5;
/** Activation energy when the lab has none [practice: 0.7 eV]. */
export const DEFAULT_EA_EV = 0.7;
/** Use (field) junction temperature for acceleration factors when the lab gives none [practice: 55 °C]. */
export const DEFAULT_USE_C = 55;
