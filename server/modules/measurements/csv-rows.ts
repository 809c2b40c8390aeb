/**
 * Reading a parametric tester's CSV: header mapping, unit conversion to SI, and a reason for
 * every row that cannot be stored. Device matching (serial → run device) happens in the service.
 */
import { parse } from 'csv-parse/sync';
import {
  COLUMN_LABEL,
  ownColumn,
  REQUIRED_COLUMNS,
  UNIT_FACTOR,
  UNIT_LABEL,
  UPLOAD_MAX_ROWS,
  type ColumnMapping,
  type MeasurementColumn,
  type Units,
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

const unitOf = (col: MeasurementColumn, units: Units): string | null =>
  col === 'icbo_a' ? units.icbo : col === 'hfe_ic_a' ? units.hfeIc : col === 'vcesat_v' ? units.vcesat : null;

/**
 * Parse the file into rows. Whole-file problems (not CSV, no header, a required column missing,
 * too many rows) throw a 422; row problems are collected per row.
 */
export function parseMeasurementCsv(
  buf: Buffer,
  opts: { mapping: ColumnMapping; units: Units; defaultTempC: number; now: Date },
): ParsedFile {
  const text = decode(buf);
  let records: Array<{ record: string[]; info: { lines: number } }>;
  try {
    records = parse(text, {
      delimiter: detectDelimiter(text),
      bom: true,
      info: true,
      relax_column_count: true,
      relax_quotes: true,
      skip_empty_lines: true,
      skip_records_with_empty_values: true,
      trim: true,
    }) as unknown as Array<{ record: string[]; info: { lines: number } }>;
  } catch (e) {
    throw unprocessable(`The file could not be read as CSV (${(e as Error).message.split('\n')[0]}).`);
  }
  if (records.length === 0) throw unprocessable('The file is empty.');
  const header = records[0].record;
  if (records.length - 1 > UPLOAD_MAX_ROWS) {
    throw unprocessable(`The file has ${records.length - 1} rows; upload at most ${UPLOAD_MAX_ROWS} at a time.`);
  }

  // Header → our column: the mapping first, then a header that already is our name.
  const mappingByNorm = new Map(Object.entries(opts.mapping).map(([k, v]) => [k.trim(), v]));
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
    const target = mapped ?? (own && !Object.values(opts.mapping).includes(own) ? own : null);
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

  const rows: ParsedRow[] = [];
  for (const { record, info } of records.slice(1)) {
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

    // A dead device: the result column says so (OPEN, SHORT, NO READING), or the tester wrote the
    // word in place of a value. Its values may then be empty and are not stored.
    const resultRaw = cell('result');
    let result: MeasurementResult = 'measured';
    if (resultRaw && !looksLikeFormula(resultRaw)) {
      const word = catastrophicWord(resultRaw);
      if (word) result = word;
      else if (!/^(measured|ok|pass)$/i.test(resultRaw.trim())) {
        reasons.push(`result "${resultRaw.slice(0, 20)}" is not one of: empty, measured, OPEN, SHORT, NO READING.`);
      }
    }
    const NUMERIC: MeasurementColumn[] = ['hfe', 'hfe_ic_a', 'hfe_vce_v', 'icbo_a', 'icbo_vcb_v', 'vcesat_v', 'bvceo_v'];
    if (result === 'measured') {
      const words = new Set(NUMERIC.map((c) => catastrophicWord(cell(c))).filter((w): w is CatastrophicResult => w !== null));
      if (words.size === 1) result = [...words][0];
      else if (words.size > 1) reasons.push(`The row says both ${[...words].join(' and ')}; give one result.`);
    }
    const dead = result !== 'measured';
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
      const unit = unitOf(c, opts.units);
      return Number(raw) * (unit ? UNIT_FACTOR[unit] : 1);
    };
    const hfe = number('hfe', true);
    const hfeIcA = number('hfe_ic_a', true);
    const hfeVceV = number('hfe_vce_v', true);
    const icboA = number('icbo_a', true);
    const icboVcbV = number('icbo_vcb_v', true);
    const vcesatV = number('vcesat_v', true);
    const bvceoV = number('bvceo_v', false);
    const tempC = number('temp_c', false);

    if (hfe !== null && !(hfe > 0 && hfe < 100000)) reasons.push(`hFE ${hfe} is outside 0–100000.`);
    if (hfeIcA !== null && !(hfeIcA > 0)) reasons.push(`The hFE test current must be above 0 ${UNIT_LABEL[opts.units.hfeIc]}.`);
    if (hfeVceV !== null && !(hfeVceV > 0)) reasons.push('The hFE test voltage must be above 0 V.');
    if (icboA !== null && icboA < 0) {
      reasons.push(
        `Negative leakage: ICBO ${+(icboA / UNIT_FACTOR[opts.units.icbo]).toPrecision(6)} ${UNIT_LABEL[opts.units.icbo]} is below zero.`,
      );
    }
    if (icboA !== null && icboA > 1) reasons.push('ICBO above 1 A is not a leakage reading; check the unit.');
    if (icboVcbV !== null && !(icboVcbV > 0)) reasons.push('The ICBO test voltage must be above 0 V.');
    if (vcesatV !== null && (vcesatV < 0 || vcesatV > 100)) reasons.push(`VCE(sat) ${vcesatV} V is outside 0–100 V.`);
    if (bvceoV !== null && !(bvceoV > 0)) reasons.push('BVCEO must be above 0 V.');
    if (tempC !== null && (tempC < -65 || tempC > 300)) reasons.push(`temp_c ${tempC} °C is outside −65–300 °C.`);

    let measuredAt: Date | null = opts.now;
    const at = cell('measured_at');
    if (at) {
      if (looksLikeFormula(at)) measuredAt = null;
      else if (!DATE_TIME.test(at)) {
        reasons.push(`measured_at "${at.slice(0, 30)}" is not an ISO date-time (e.g. 2026-03-14T09:30:00Z).`);
        measuredAt = null;
      } else {
        const hasZone = /(Z|[+-]\d{2}:?\d{2})$/i.test(at);
        const d = new Date(hasZone ? at.replace(' ', 'T') : `${at.replace(' ', 'T')}${at.length === 10 ? 'T00:00:00' : ''}Z`);
        if (Number.isNaN(d.getTime())) {
          reasons.push(`measured_at "${at.slice(0, 30)}" is not a real date.`);
          measuredAt = null;
        } else if (d.getTime() > opts.now.getTime() + 10 * 60_000) {
          reasons.push(`measured_at ${d.toISOString()} lies in the future.`);
          measuredAt = null;
        } else measuredAt = d;
      }
    }

    const ok = reasons.length === 0;
    rows.push({
      row: info.lines,
      serial,
      lot,
      reasons,
      values: ok
        ? {
            result,
            hfe,
            hfeIcA,
            hfeVceV,
            icboA,
            icboVcbV,
            vcesatV,
            bvceoV,
            measuredC: tempC ?? opts.defaultTempC,
            measuredAt: measuredAt!,
          }
        : null,
    });
  }
  if (rows.length === 0) throw unprocessable('The file has a header but no rows.');
  return { columns, rows };
}
