import { columnUnit, MEASUREMENT_COLUMNS, ownColumn, REQUIRED_COLUMNS, UNIT_LABEL } from '@/shared/domain/measurement-columns';
import type { ColumnMapping, MeasurementColumn } from '@/shared/schemas/measurements';

/** The header cells of a CSV's first line (same delimiter rule as the server: , ; or tab, whichever is most common). */
export function csvHeaders(text: string): string[] {
  const first = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '';
  const delims = [',', ';', '\t'].map((d) => [d, first.split(d).length - 1] as const).sort((a, b) => b[1] - a[1]);
  const d = delims[0][1] > 0 ? delims[0][0] : ',';
  const out: string[] = [];
  let cur = '';
  let quoted = false;
  for (let i = 0; i < first.length; i++) {
    const ch = first[i];
    if (ch === '"') {
      if (quoted && first[i + 1] === '"') {
        cur += '"';
        i++;
      } else quoted = !quoted;
    } else if (ch === d && !quoted) {
      out.push(cur.trim());
      cur = '';
    } else cur += ch;
  }
  out.push(cur.trim());
  return out.filter((h) => h.length > 0);
}

/** Our column → the file header chosen for it (null = not in the file). */
export type ColumnChoice = Record<MeasurementColumn, string | null>;

/** Start from headers that already carry our names ("hfe", "ICBO_A", "Hfe IC A"…). */
export function guessColumns(headers: string[]): ColumnChoice {
  const choice = Object.fromEntries(MEASUREMENT_COLUMNS.map((c) => [c, null])) as ColumnChoice;
  for (const h of headers) {
    const own = ownColumn(h);
    if (own && !choice[own]) choice[own] = h;
  }
  return choice;
}

/** The request's mapping (file header → ours); headers equal to our names need no entry but get one anyway. */
export function toMapping(choice: ColumnChoice): ColumnMapping {
  const m: ColumnMapping = {};
  for (const c of MEASUREMENT_COLUMNS) {
    const h = choice[c];
    if (h) m[h] = c;
  }
  return m;
}

export function missingRequired(choice: ColumnChoice): MeasurementColumn[] {
  return REQUIRED_COLUMNS.filter((c) => !choice[c]);
}

/** Two of our columns fed from one header. */
export function doubleUsed(choice: ColumnChoice): string[] {
  const seen = new Map<string, number>();
  for (const h of Object.values(choice)) if (h) seen.set(h, (seen.get(h) ?? 0) + 1);
  return [...seen].filter(([, n]) => n > 1).map(([h]) => h);
}

/** Each chosen column's unit as its header states it, or the problem (the same rule the server applies). */
export function unitProblems(choice: ColumnChoice): Partial<Record<MeasurementColumn, string>> {
  const out: Partial<Record<MeasurementColumn, string>> = {};
  for (const c of MEASUREMENT_COLUMNS) {
    const h = choice[c];
    if (!h) continue;
    const u = columnUnit(c, h);
    if (u.problem) out[c] = u.problem;
  }
  return out;
}

/** "mA (from the header)" for a column with a unit, '' for one without. */
export function unitNote(c: MeasurementColumn, header: string): string {
  const u = columnUnit(c, header);
  return u.unit ? `Unit ${UNIT_LABEL[u.unit]}, from the header` : '';
}
