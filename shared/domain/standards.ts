/**
 * The test standards' windows and tolerances, and the trade's defaults — declared once, each with
 * its source (tags as in the project's reference list: [pub: …] published, [practice] common
 * practice, [memory] recalled, not checked against the text).
 */

import type { PlanKind } from './stress';

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

/**
 * The stress temperature is a minimum with a band in kelvin: the chamber counts as "at temperature"
 * from `setC − belowK` to `setC + aboveK`. Kelvin, not a percentage of the Celsius value (3 % of
 * 0 °C is no band at all, 3 % of 25 °C is 0.75 K).
 */
export interface ChamberBandK {
  belowK: number;
  aboveK: number;
}
/** Widest band a plan may state on either side (K). */
export const CHAMBER_BAND_MAX_K = 20;
/**
 * The methods' bands, per stress kind (plans default to these; a plan may state its own):
 * - htrb: the stress temperature a minimum, +5/−0 K [memory: JESD22-A108 and MIL-STD-750 state the
 *   temperature as a minimum with a one-sided tolerance — confirm the figure; JESD22-A103D Table 1
 *   uses −0/+10 °C for storage, pub].
 * - thb: 85 ± 2 °C [memory: JESD22-A101, 85 ± 2 °C / 85 ± 5 % RH — confirm].
 * - hotl, iol: room ambient ± 5 K; the stress is the junction the parts heat themselves to
 *   [practice].
 * - tc: the hot extreme, which the load must reach and may pass by up to 15 K (+15/−0) [memory:
 *   JESD22-A104 tolerances on Ts(max) +15/−0 °C and Ts(min) +0/−10 °C — confirm]; the cold extreme's
 *   band is `TC_COLD_BAND_K` (shared/domain/chamber-methods.ts).
 * - htsl: −0/+10 K [pub: JESD22-A103D Table 1].
 * - ac: 121 ± 2 °C [memory: JESD22-A102 121 ± 2 °C, 100 % RH, 205 kPa — confirm]; unbiased HAST the same
 *   ± 2 K [memory: JESD22-A118].
 */
export const METHOD_CHAMBER_BAND_K: Readonly<Record<PlanKind, Readonly<ChamberBandK>>> = {
  htrb: { belowK: 0, aboveK: 5 },
  thb: { belowK: 2, aboveK: 2 },
  hotl: { belowK: 5, aboveK: 5 },
  iol: { belowK: 5, aboveK: 5 },
  tc: { belowK: 0, aboveK: 15 },
  htsl: { belowK: 0, aboveK: 10 },
  ac: { belowK: 2, aboveK: 2 },
};
/** Plans saved before bands were per plan kept the ±3 % of their set value they ran with [pub: MIL-STD-750 general requirements §4.5]. */
export const LEGACY_CHAMBER_TOLERANCE_PCT = 3;

/** The chamber's accepted range for a set point and band (°C). */
export function chamberLimits(setC: number, band: ChamberBandK): { lowC: number; highC: number } {
  return { lowC: setC - band.belowK, highC: setC + band.aboveK };
}
/**
 * Headroom above the chamber band's top before protection's hard trip, for a reverse-bias stress
 * planned at or above the part's rating (HTRB at Tj max with a +5/−0 K band): the junction of a
 * reverse-biased part sits at the chamber plus tenths of a kelvin of leakage heating, so a trip at
 * the data sheet's Tj max would trip every healthy socket. 5 K leaves room for the oven's swing and
 * socket spread (Emberlot's choice, not a standard's; bench protection.atRating).
 */
export const RATED_STRESS_HEADROOM_K = 5;
/**
 * The junction temperature at which protection trips outright: the part's Tj max, or for a
 * reverse-bias stress whose band reaches past Tj max − RATED_STRESS_HEADROOM_K, the band's top plus
 * that headroom. Powered stresses always keep Tj max (their junction is held below it on purpose).
 */
export function protectionLimitC(p: { tjMaxC: number; reverseBias: boolean; chamberC: number; band: ChamberBandK }): number {
  if (!p.reverseBias) return p.tjMaxC;
  return Math.max(p.tjMaxC, chamberLimits(p.chamberC, p.band).highC + RATED_STRESS_HEADROOM_K);
}
/** Where the rig's controller is aimed: the middle of the band (a one-sided band puts it above the minimum). */
export function chamberSetpointC(setC: number, band: ChamberBandK): number {
  return setC + (band.aboveK - band.belowK) / 2;
}
/** The accepted range in words: "150–155 °C". */
export function bandRange(setC: number, band: ChamberBandK): string {
  const l = chamberLimits(setC, band);
  const n = (x: number) => String(+x.toFixed(2));
  return `${n(l.lowC)}–${n(l.highC)} °C`;
}
/** The band in words: "+5/−0 K" or "± 2 K". */
export function bandText(band: ChamberBandK): string {
  const n = (x: number) => String(+x.toFixed(2));
  return band.aboveK === band.belowK ? `± ${n(band.aboveK)} K` : `+${n(band.aboveK)}/−${n(band.belowK)} K`;
}
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

/**
 * Second breakdown of a bipolar transistor, when the data sheet's SOA plot is not entered: the S/b
 * line I·V^n = const leaves the thermal (constant-power) line at this knee voltage…
 * [practice: power-transistor SOA plots commonly leave the thermal line at 20–40 V; the low end taken — from memory, confirm].
 */
export const DEFAULT_SB_KNEE_V = 20;
/** …and falls with this exponent n (I ∝ V^−n; the thermal line is n = 1) [memory: S/b lines fall at n ≈ 1.5–2.5 — confirm]. */
export const DEFAULT_SB_SLOPE_N = 2;
/**
 * The S/b current limit derates with case temperature more gently than power: linearly from 100 %
 * at the power rating's case temperature to this fraction at Tj max [practice: the data sheets' own
 * S/b derating curves; reproduces the reference check k_sb 0.75 at 100 °C on a 175 °C part].
 */
export const SB_DERATING_AT_TJMAX = 0.5;
