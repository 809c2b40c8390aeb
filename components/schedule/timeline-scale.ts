/**
 * The schedule's time scale, pure (tests/app/timeline-scale.test.ts): a zoom level is a number of
 * stress-clock hours per 100 px, so the scale is the same on every visit and on the demo's fast
 * clock as on a real one. The level a person chose is remembered per user (this browser); the first
 * visit uses DEFAULT_ZOOM_H. The window shows a little of the past and pans by half a screen.
 */
import { formatLocal } from '@/shared/domain/format';

/** Clock hours per 100 px, from close to far. */
export const ZOOM_LEVELS_H = [3, 6, 12, 24, 48, 96, 168, 336] as const;
/** First visit: one day per 100 px (a 390 px phone shows about three days, a wide screen two weeks). */
export const DEFAULT_ZOOM_H = 24;
/** Share of the window left of now when not panned. */
const PAST_SHARE = 0.15;
/** Tick steps in clock hours; the first that leaves at least MIN_TICK_PX between labels is used. */
const TICK_STEPS_H = [1, 2, 3, 6, 12, 24, 48, 96, 168, 336, 672, 1344];
const MIN_TICK_PX = 84;

export function zoomIndex(hPer100: number): number {
  const k = ZOOM_LEVELS_H.indexOf(hPer100 as (typeof ZOOM_LEVELS_H)[number]);
  return k >= 0 ? k : ZOOM_LEVELS_H.indexOf(DEFAULT_ZOOM_H);
}

export interface ScaleWindow {
  fromMs: number;
  toMs: number;
  /** Wall ms per pixel. */
  msPerPx: number;
}

/** The visible window: `widthPx` wide at `hPer100` clock hours per 100 px, panned by `panH` clock hours. */
export function visibleWindow(nowMs: number, msPerClockH: number, widthPx: number, hPer100: number, panH: number): ScaleWindow {
  const msPerPx = (hPer100 * msPerClockH) / 100;
  const span = Math.max(1, widthPx) * msPerPx;
  const fromMs = nowMs - PAST_SHARE * span + panH * msPerClockH;
  return { fromMs, toMs: fromMs + span, msPerPx };
}

/** Clock hours one "Earlier"/"Later" press moves: half the window, in whole hours. */
export function panStepH(widthPx: number, hPer100: number): number {
  return Math.max(1, Math.round((Math.max(1, widthPx) * hPer100) / 200));
}

export interface Tick {
  ms: number;
  label: string;
}

/**
 * Ticks across the window, aligned to whole steps counted from now (clock hours). On a real clock
 * (an hour is an hour) they carry the local date and time; on the accelerated demo clock, wall
 * dates would read as seconds, so they say how far from now in clock time ("now", "+1 d", "−12 h").
 */
export function ticks(w: ScaleWindow, nowMs: number, msPerClockH: number): { stepH: number; ticks: Tick[] } {
  const pxPerH = msPerClockH / w.msPerPx;
  const stepH = TICK_STEPS_H.find((s) => s * pxPerH >= MIN_TICK_PX) ?? TICK_STEPS_H[TICK_STEPS_H.length - 1];
  const stepMs = stepH * msPerClockH;
  const realClock = msPerClockH >= 3_600_000;
  const out: Tick[] = [];
  const first = Math.ceil((w.fromMs - nowMs) / stepMs);
  for (let k = first; nowMs + k * stepMs <= w.toMs; k++) {
    const ms = nowMs + k * stepMs;
    out.push({ ms, label: realClock ? realLabel(ms, stepH) : relativeLabel(k * stepH) });
  }
  return { stepH, ticks: out };
}

function realLabel(ms: number, stepH: number): string {
  const [date, time] = formatLocal(new Date(ms)).split(' ');
  return stepH >= 24 ? date.slice(5) : `${date.slice(5)} ${time}`;
}

/** "now", "+6 h", "+2 d", "−1 d 12 h" (clock time from now). */
export function relativeLabel(h: number): string {
  if (h === 0) return 'now';
  const sign = h > 0 ? '+' : '−';
  const a = Math.abs(h);
  const d = Math.floor(a / 24);
  const r = a % 24;
  return `${sign}${d ? `${d} d` : ''}${d && r ? ' ' : ''}${r ? `${r} h` : ''}`;
}

/** Where the zoom level is remembered in this browser, per user. */
export const zoomStorageKey = (userId: string | undefined) => `emberlot.schedule.zoomH.${userId ?? 'anon'}`;

export function readZoom(userId: string | undefined): number {
  try {
    const v = Number(globalThis.localStorage?.getItem(zoomStorageKey(userId)));
    return (ZOOM_LEVELS_H as readonly number[]).includes(v) ? v : DEFAULT_ZOOM_H;
  } catch {
    return DEFAULT_ZOOM_H;
  }
}

export function saveZoom(userId: string | undefined, hPer100: number): void {
  try {
    globalThis.localStorage?.setItem(zoomStorageKey(userId), String(hPer100));
  } catch {
    // Storage refused (private mode): the scale still works for this visit.
  }
}

/**
 * A due date typed as local "YYYY-MM-DD HH:MM" (or "YYYY-MM-DD", end of that day 23:59) → ISO;
 * null for empty; an Error message for anything else.
 */
export function parseDueInput(text: string): { iso: string | null } | { error: string } {
  const s = text.trim();
  if (!s) return { iso: null };
  const m = /^(\d{4})-(\d{2})-(\d{2})(?:[ T](\d{2}):(\d{2}))?$/.exec(s);
  if (!m) return { error: 'Write the date as YYYY-MM-DD HH:MM (your time), e.g. 2026-12-20 17:00' };
  const [y, mo, d, hh, mm] = [
    Number(m[1]),
    Number(m[2]),
    Number(m[3]),
    m[4] === undefined ? 23 : Number(m[4]),
    m[5] === undefined ? 59 : Number(m[5]),
  ];
  const date = new Date(y, mo - 1, d, hh, mm);
  if (date.getFullYear() !== y || date.getMonth() !== mo - 1 || date.getDate() !== d || hh > 23 || mm > 59) {
    return { error: 'That date does not exist; write it as YYYY-MM-DD HH:MM' };
  }
  return { iso: date.toISOString() };
}

/** Lateness in words: "Late by 150 h", "On time", "No due date". */
export function latenessWords(lateH: number | null): string {
  if (lateH === null) return 'No due date';
  if (lateH <= 0) return 'On time';
  return `Late by ${lateH >= 48 ? `${+(lateH / 24).toFixed(1)} d` : `${+lateH.toFixed(1)} h`}`;
}
