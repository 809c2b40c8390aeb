/**
 * Reading a parametric tester's CSV: header mapping, unit conversion to SI, and a reason for
 * every row that cannot be stored. Device matching (serial → run device) happens in the service.
 */
import { parse } from 'csv-parse/sync';
import {
  COLUMN_LABEL,
  columnUnit,
  ownColumn,
  REQUIRED_COLUMNS,
  UNIT_FACTOR,
  UNIT_LABEL,
  UPLOAD_MAX_ROWS,
  type ColumnMapping,
  type MeasurementColumn,
  type MeasurementUnit,
} from '../../../shared/schemas/measurements';
import { catastrophicWord, type CatastrophicResult, type MeasurementResult } from '../../../shared/evidence';
import { unprocessable } from '../../http/errors';

export interface ParsedValues {
  /** measured, or a catastrophic result whose values are null. */
  result: MeasurementResult;
  hfe: number | null;
  hfeIcA: number | null;
  hfeVceV: number | null;
  icboA: number | null;
  icboVcbV: number | null;
  vcesatV: number | null;
  bvceoV: number | null;
  measuredC: number;
  measuredAt: Date;
}

export interface ParsedRow {
  /** Line in the file; the header is line 1. */
  row: number;
  serial: string | null;
  lot: string | null;
  values: ParsedValues | null;
  reasons: string[];
}

export interface ParsedFile {
  columns: Record<string, MeasurementColumn | null>;
  rows: ParsedRow[];
}

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
/** ISO 8601 date-time (T or space), optional seconds/fraction and zone. */
const DATE_TIME = /^\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d{1,6})?)?)?(Z|[+-]\d{2}:?\d{2})?$/i;

/**
 * A cell a spreadsheet would run as a formula: starts with = or @, or with + / - without being a
 * plain number, or with a tab or carriage return (OWASP CSV-injection guidance, common practice).
 */
export function looksLikeFormula(raw: string): boolean {
  if (/^[=@\t\r]/.test(raw)) return true;
  if (/^[+-]/.test(raw) && !NUMBER.test(raw.trim())) return true;
  return false;
}

function decode(buf: Buffer): string {
  if (buf.includes(0)) throw unprocessable('The file is not a text CSV file (it contains binary data).');
  const utf8 = buf.toString('utf8');
  // Testers on older PCs write Latin-1 (µ in headers); fall back when UTF-8 does not decode.
  return utf8.includes('\uFFFD') ? buf.toString('latin1') : utf8;
}

function detectDelimiter(text: string): string {
  const first = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0] ?? '';
  const counts = [',', ';', '\t'].map((d) => [d, first.split(d).length - 1] as const);
  counts.sort((a, b) => b[1] - a[1]);
  return counts[0][1] > 0 ? counts[0][0] : ',';
}

/** Each column's unit as its header states it (columns without a unit are absent). */
type ColumnUnits = Partial<Record<MeasurementColumn, MeasurementUnit>>;

type CsvRecord = { record: string[]; info: { lines: number } };
type ParseOptions = { mapping: ColumnMapping; defaultTempC: number; now: Date };

/** The file's records (header first); a file that is not CSV throws a 422. */
function readRecords(text: string): CsvRecord[] {
  try {
    return parse(text, {
      delimiter: detectDelimiter(text),
      bom: true,
      info: true,
      relax_column_count: true,
      relax_quotes: true,
      skip_empty_lines: true,
      skip_records_with_empty_values: true,
      trim: true,
    }) as unknown as CsvRecord[];
  } catch (e) {
    throw unprocessable(`The file could not be read as CSV (${(e as Error).message.split('\n')[0]}).`);
  }
}

/** Header → our column: the mapping first, then a header that already is our name. */
function mapHeader(header: string[], mapping: ColumnMapping) {
  const mappingByNorm = new Map(Object.entries(mapping).map(([k, v]) => [k.trim(), v]));
  for (const k of mappingByNorm.keys()) {
    if (!header.includes(k)) {
      throw unprocessable(`The column mapping names "${k}", which is not a column of this file. Its columns are: ${header.join(', ')}.`);
    }
  }
  const columns: Record<string, MeasurementColumn | null> = {};
  const indexOf = new Map<MeasurementColumn, number>();
  header.forEach((h, i) => {
    const mapped = mappingByNorm.get(h);
    const own = ownColumn(h);
    const target = mapped ?? (own && !Object.values(mapping).includes(own) ? own : null);
    if (target && indexOf.has(target)) {
      throw unprocessable(`Two columns of the file ("${header[indexOf.get(target)!]}" and "${h}") both give ${target}; map only one.`);
    }
    columns[h] = target;
    if (target) indexOf.set(target, i);
  });
  const missing = REQUIRED_COLUMNS.filter((c) => !indexOf.has(c));
  if (missing.length) {
    throw unprocessable(
      `The file has no column for ${missing.map((c) => `${c} (${COLUMN_LABEL[c]})`).join(', ')}. Map one of its columns (${header.join(', ')}) to each.`,
      { missingColumns: missing, columns },
    );
  }
  // Units come from the headers: a column whose header states none, or an unknown one, refuses the file.
  const units: ColumnUnits = {};
  const columnProblems: string[] = [];
  for (const [c, i] of indexOf) {
    const u = columnUnit(c, header[i]);
    if (u.problem) columnProblems.push(u.problem);
    else if (u.unit) units[c] = u.unit;
  }
  if (columnProblems.length) {
    throw unprocessable(`The file's units cannot be read; nothing was checked. ${columnProblems.join(' ')}`, { columnProblems, columns });
  }
  return { columns, indexOf, units };
}

/** A value in the unit its column's header gives, for messages ("10 A", "35 nA"). */
const inUnit = (si: number, unit: MeasurementUnit | undefined) =>
  unit ? `${+(si / UNIT_FACTOR[unit]).toPrecision(6)} ${UNIT_LABEL[unit]}` : `${+si.toPrecision(6)}`;

type Cell = (c: MeasurementColumn) => string | null;

const NUMERIC: MeasurementColumn[] = ['hfe', 'hfe_ic_a', 'hfe_vce_v', 'icbo_a', 'icbo_vcb_v', 'vcesat_v', 'bvceo_v'];

/**
 * A dead device: the result column says so (OPEN, SHORT, NO READING), or the tester wrote the
 * word in place of a value. Its values may then be empty and are not stored.
 */
function rowResult(cell: Cell, reasons: string[]): MeasurementResult {
  const resultRaw = cell('result');
  let result: MeasurementResult = 'measured';
  if (resultRaw && !looksLikeFormula(resultRaw)) {
    const word = catastrophicWord(resultRaw);
    if (word) result = word;
    else if (!/^(measured|ok|pass)$/i.test(resultRaw.trim())) {
      reasons.push(`result "${resultRaw.slice(0, 20)}" is not one of: empty, measured, OPEN, SHORT, NO READING.`);
    }
  }
  if (result === 'measured') {
    const words = new Set(NUMERIC.map((c) => catastrophicWord(cell(c))).filter((w): w is CatastrophicResult => w !== null));
    if (words.size === 1) result = [...words][0];
    else if (words.size > 1) reasons.push(`The row says both ${[...words].join(' and ')}; give one result.`);
  }
  return result;
}

/** The row's numbers in SI (null when empty, refused or not stored for a dead device). */
function rowNumbers(cell: Cell, dead: boolean, units: ColumnUnits, reasons: string[]) {
  const number = (c: MeasurementColumn, required: boolean): number | null => {
    const raw = cell(c);
    if (raw === null || raw === '') {
      if (required && !dead) reasons.push(`${c} is empty.`);
      return null;
    }
    if (dead && c !== 'temp_c') return null; // a dead device's words or leftover values are not stored
    if (catastrophicWord(raw)) return null; // two different words: reported once above
    if (looksLikeFormula(raw)) return null; // already reported
    if (!NUMBER.test(raw)) {
      reasons.push(`${c} "${raw.slice(0, 20)}" is not a number.`);
      return null;
    }
    const unit = units[c];
    return Number(raw) * (unit ? UNIT_FACTOR[unit] : 1);
  };
  return {
    hfe: number('hfe', true),
    hfeIcA: number('hfe_ic_a', true),
    hfeVceV: number('hfe_vce_v', true),
    icboA: number('icbo_a', true),
    icboVcbV: number('icbo_vcb_v', true),
    vcesatV: number('vcesat_v', true),
    bvceoV: number('bvceo_v', false),
    tempC: number('temp_c', false),
  };
}

/** The plausibility checks on the row's numbers. */
function checkRanges(n: ReturnType<typeof rowNumbers>, units: ColumnUnits, reasons: string[]) {
  const { hfe, hfeIcA, hfeVceV, icboA, icboVcbV, vcesatV, bvceoV, tempC } = n;
  if (hfe !== null && !(hfe > 0 && hfe < 100000)) reasons.push(`hFE ${hfe} is outside 0–100000.`);
  if (hfeIcA !== null && !(hfeIcA > 0)) reasons.push(`The hFE test current must be above 0 (${inUnit(hfeIcA, units.hfe_ic_a)}).`);
  if (hfeVceV !== null && !(hfeVceV > 0)) reasons.push('The hFE test voltage must be above 0 V.');
  if (icboA !== null && icboA < 0) {
    reasons.push(`Negative leakage: ICBO ${inUnit(icboA, units.icbo_a)} is below zero.`);
  }
  if (icboA !== null && icboA > 1)
    reasons.push(`ICBO ${inUnit(icboA, units.icbo_a)} is above 1 A, not a leakage reading; check the unit in the header.`);
  if (icboVcbV !== null && !(icboVcbV > 0)) reasons.push('The ICBO test voltage must be above 0 V.');
  if (vcesatV !== null && (vcesatV < 0 || vcesatV > 100)) reasons.push(`VCE(sat) ${inUnit(vcesatV, units.vcesat_v)} is outside 0–100 V.`);
  if (bvceoV !== null && !(bvceoV > 0)) reasons.push('BVCEO must be above 0 V.');
  if (tempC !== null && (tempC < -65 || tempC > 300)) reasons.push(`temp_c ${tempC} °C is outside −65–300 °C.`);
}

/** The row's measuring time: the cell when given (ISO, not in the future), else now; null when refused. */
function rowMeasuredAt(at: string | null, now: Date, reasons: string[]): Date | null {
  if (!at) return now;
  if (looksLikeFormula(at)) return null;
  if (!DATE_TIME.test(at)) {
    reasons.push(`measured_at "${at.slice(0, 30)}" is not an ISO date-time (e.g. 2026-03-14T09:30:00Z).`);
    return null;
  }
  const hasZone = /(Z|[+-]\d{2}:?\d{2})$/i.test(at);
  const d = new Date(hasZone ? at.replace(' ', 'T') : `${at.replace(' ', 'T')}${at.length === 10 ? 'T00:00:00' : ''}Z`);
  if (Number.isNaN(d.getTime())) {
    reasons.push(`measured_at "${at.slice(0, 30)}" is not a real date.`);
    return null;
  }
  if (d.getTime() > now.getTime() + 10 * 60_000) {
    reasons.push(`measured_at ${d.toISOString()} lies in the future.`);
    return null;
  }
  return d;
}

/** One data row: its serial, lot, values in SI and every reason it cannot be stored. */
function parseRow(
  { record, info }: CsvRecord,
  header: string[],
  { indexOf, units }: { indexOf: Map<MeasurementColumn, number>; units: ColumnUnits },
  opts: ParseOptions,
): ParsedRow {
  const reasons: string[] = [];
  const cell = (c: MeasurementColumn): string | null => {
    const i = indexOf.get(c);
    if (i === undefined) return null;
    const v = record[i];
    return v === undefined ? '' : v;
  };
  if (record.length !== header.length) {
    reasons.push(`The row has ${record.length} cells; the header has ${header.length}.`);
  }
  for (const [c, i] of indexOf) {
    const v = record[i];
    if (v !== undefined && looksLikeFormula(v)) {
      reasons.push(`The ${c} cell "${v.slice(0, 20)}" looks like a spreadsheet formula; formula cells are refused.`);
    }
  }
  const serialRaw = cell('serial') ?? '';
  const serial = serialRaw && !looksLikeFormula(serialRaw) ? serialRaw : null;
  if (!serialRaw) reasons.push('The serial is empty.');
  else if (serialRaw.length > 40) reasons.push('The serial is longer than 40 characters.');
  const lotRaw = cell('lot');
  const lot = lotRaw && !looksLikeFormula(lotRaw) ? lotRaw : null;

  const result = rowResult(cell, reasons);
  const n = rowNumbers(cell, result !== 'measured', units, reasons);
  checkRanges(n, units, reasons);
  const measuredAt = rowMeasuredAt(cell('measured_at'), opts.now, reasons);

  const ok = reasons.length === 0;
  return {
    row: info.lines,
    serial,
    lot,
    reasons,
    values: ok
      ? {
          result,
          hfe: n.hfe,
          hfeIcA: n.hfeIcA,
          hfeVceV: n.hfeVceV,
          icboA: n.icboA,
          icboVcbV: n.icboVcbV,
          vcesatV: n.vcesatV,
          bvceoV: n.bvceoV,
          measuredC: n.tempC ?? opts.defaultTempC,
          measuredAt: measuredAt!,
        }
      : null,
  };
}

/**
 * Parse the file into rows. Whole-file problems (not CSV, no header, a required column missing,
 * too many rows) throw a 422; row problems are collected per row.
 */
export function parseMeasurementCsv(buf: Buffer, opts: ParseOptions): ParsedFile {
  const text = decode(buf);
  const records = readRecords(text);
  if (records.length === 0) throw unprocessable('The file is empty.');
  const header = records[0].record;
  if (records.length - 1 > UPLOAD_MAX_ROWS) {
    throw unprocessable(`The file has ${records.length - 1} rows; upload at most ${UPLOAD_MAX_ROWS} at a time.`);
  }
  const { columns, indexOf, units } = mapHeader(header, opts.mapping);
  const rows = records.slice(1).map((r) => parseRow(r, header, { indexOf, units }, opts));
  if (rows.length === 0) throw unprocessable('The file has a header but no rows.');
  return { columns, rows };
}
