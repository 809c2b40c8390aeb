/**
 * Axis arithmetic for the server-drawn charts, kept pure so it is unit-tested on its own
 * (tests/unit/report-chart.test.ts):
 * - `niceScale`: an axis that always contains 0 (drift is read against time zero) with "nice"
 *   steps of 1, 2, 2.5 or 5 × 10^k (the nice-number labelling idea of Heckbert, Graphics Gems,
 *   1990 — from memory; the step set is common practice).
 * - `yDomain`: the values a drift chart must show — 0, every limit and the data — but an outlier
 *   (a catastrophic reading) may not squash the rest: the axis stops at a few limit-spans and the
 *   points beyond are drawn at the edge and counted.
 * - `placeLabels`: tick labels kept inside the plotting box (the last x label was clipped on phones).
 */

export interface Scale {
  min: number;
  max: number;
  step: number;
  ticks: number[];
}

const NICE_STEPS = [1, 2, 2.5, 5, 10];

/** The smallest nice step ≥ raw. */
export function niceStep(raw: number): number {
  if (!(raw > 0) || !Number.isFinite(raw)) return 1;
  const exp = Math.floor(Math.log10(raw));
  const base = 10 ** exp;
  const f = raw / base;
  const m = NICE_STEPS.find((s) => f <= s * (1 + 1e-9)) ?? 10;
  return m * base;
}

/** Rounds away float noise of tick arithmetic (0.30000000000000004 → 0.3). */
const clean = (x: number) => (x === 0 ? 0 : +x.toPrecision(12));

/** An axis from lo to hi that includes 0, with about `targetTicks` nice ticks. */
export function niceScale(lo: number, hi: number, targetTicks = 5): Scale {
  let a = Math.min(lo, hi, 0);
  let b = Math.max(lo, hi, 0);
  if (!Number.isFinite(a) || !Number.isFinite(b)) {
    a = 0;
    b = 1;
  }
  if (a === b) b = a + 1;
  const step = niceStep((b - a) / Math.max(1, targetTicks - 1));
  const min = clean(Math.floor(a / step + 1e-9) * step);
  const max = clean(Math.ceil(b / step - 1e-9) * step);
  const ticks: number[] = [];
  for (let i = 0; ; i++) {
    const v = clean(min + i * step);
    if (v > max + step * 1e-9) break;
    ticks.push(v);
  }
  return { min, max, step, ticks };
}

/**
 * The y range a drift chart needs: 0, the limits and the data, the data capped at `spans` times the
 * largest |limit| (or of the central data when there is no limit) so one runaway reading does not
 * flatten every other device. Returns the range and how many values lie beyond it.
 */
export function yDomain(values: readonly number[], limits: readonly number[], spans = 3): { lo: number; hi: number; beyond: number } {
  const finite = values.filter(Number.isFinite);
  const reach = Math.max(0, ...limits.map(Math.abs));
  const cap = reach > 0 ? reach * spans : Infinity;
  let lo = Math.min(0, ...limits);
  let hi = Math.max(0, ...limits);
  let beyond = 0;
  for (const v of finite) {
    if (Math.abs(v) > cap) {
      beyond++;
      continue;
    }
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return { lo, hi, beyond };
}

/** A value clamped into [min, max], and whether it was. */
export function clampTo(v: number, min: number, max: number): { v: number; clipped: boolean } {
  if (v < min) return { v: min, clipped: true };
  if (v > max) return { v: max, clipped: true };
  return { v, clipped: false };
}

/** A linear map from a scale onto a pixel span (y grows downwards when `from > to`). */
export const mapLinear = (s: Pick<Scale, 'min' | 'max'>, from: number, to: number) => (v: number) =>
  from + ((v - s.min) / (s.max - s.min)) * (to - from);

/**
 * Left edges for labels centred on `centre` positions, each moved just enough to stay within
 * [lo, hi] (a label wider than the span starts at lo).
 */
export function placeLabels(items: ReadonlyArray<{ centre: number; width: number }>, lo: number, hi: number): number[] {
  return items.map(({ centre, width }) => {
    const left = centre - width / 2;
    if (left + width > hi) return Math.max(lo, hi - width);
    return Math.max(lo, left);
  });
}

/** A tick value as a label: no float noise, at most 4 significant figures. */
export const tickLabel = (v: number) => (v === 0 ? '0' : String(+v.toPrecision(4)));
