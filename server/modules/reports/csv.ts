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

/**
 * A CSV document written line by line: rows of cells through csvCell, blank lines between blocks,
 * CRLF line ends and a final CRLF (RFC 4180). Every CSV export builds its text here.
 */
export class CsvSheet {
  private readonly lines: string[] = [];

  /** One row of cells. */
  row(cells: Cell[]): this {
    this.lines.push(csvLine(cells));
    return this;
  }

  /** A label and its values on one row. */
  kv(label: string, ...values: Cell[]): this {
    return this.row([label, ...values]);
  }

  blank(): this {
    this.lines.push('');
    return this;
  }

  /** A titled block after a blank line: its title, its header, its rows (a row "none" when it has none). */
  block(title: string, header: Cell[], rows: Cell[][]): this {
    this.blank().row([title]).row(header);
    if (!rows.length) this.row(['none']);
    for (const r of rows) this.row(r);
    return this;
  }

  /** The document; `bom` puts a UTF-8 byte order mark first (spreadsheet programs read the text as UTF-8). */
  text(opts: { bom?: boolean } = {}): string {
    return `${opts.bom ? '\uFEFF' : ''}${this.lines.join('\r\n')}\r\n`;
  }
}
