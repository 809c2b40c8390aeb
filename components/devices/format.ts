/** Number formatting for ratings and plan values: three significant figures and an SI prefix where it helps. */
export function sig(x: number | null | undefined, digits = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  if (x === 0) return '0';
  return String(+x.toPrecision(digits));
}

export function withPrefix(x: number | null | undefined, unit: string, digits = 3): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  const a = Math.abs(x);
  if (a !== 0 && a < 1e-6) return `${sig(x * 1e9, digits)} n${unit}`;
  if (a !== 0 && a < 1e-3) return `${sig(x * 1e6, digits)} µ${unit}`;
  if (a !== 0 && a < 1) return `${sig(x * 1e3, digits)} m${unit}`;
  return `${sig(x, digits)} ${unit}`;
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
