/**
 * CSV cells for every export.
 *
 * CSV injection: every text cell that starts with = + - @, a tab or a carriage return gets a
 * leading single quote, so a spreadsheet shows it as text instead of running it (OWASP CSV
 * injection guidance, common practice). Numbers we computed are written as plain numbers, so a
 * negative drift such as -2.5 stays a number.
 */

export type Cell = string | number | boolean | null | undefined;

const FORMULA_START = /^[=+\-@\t\r]/;

/** One CSV cell: neutralised if it could start a formula, quoted when it holds a separator or quote. */
export function csvCell(v: Cell): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(+v.toPrecision(8)) : '';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  let s = String(v);
  if (FORMULA_START.test(s)) s = `'${s}`;
  return /[",\r\n;]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export const csvLine = (cells: Cell[]) => cells.map(csvCell).join(',');
