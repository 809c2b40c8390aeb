import { sigFigures, withSiPrefix } from '@/shared/domain/format';

/** Number formatting for ratings and plan values: three significant figures and an SI prefix where it helps. */
export function sig(x: number | null | undefined, digits = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return sigFigures(x, digits);
}

export function withPrefix(x: number | null | undefined, unit: string, digits = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return withSiPrefix(x, unit, digits);
}

export const volts = (v: number | null | undefined) => (v === null || v === undefined ? '—' : `${sig(v)} V`);
export const amps = (a: number | null | undefined) => withPrefix(a, 'A');
export const watts = (w: number | null | undefined) => withPrefix(w, 'W');
export const celsius = (c: number | null | undefined) => (c === null || c === undefined ? '—' : `${sig(c, 4)} °C`);

/** A form string → number; '' (or only spaces) → undefined; a decimal comma is accepted. */
export function parseNum(s: string): number | undefined {
  const t = s.trim().replace(',', '.');
  if (t === '') return undefined;
  const n = Number(t);
  return Number.isFinite(n) ? n : NaN;
}

/** A number → the string a form field shows (no float noise such as 0.30000000000000004). */
export function numText(n: number | null | undefined, scale = 1): string {
  if (n === null || n === undefined || !Number.isFinite(n)) return '';
  return String(+(n * scale).toPrecision(10));
}
