import { parse } from 'csv-parse/sync';
import { badRequest } from '../../http/errors';

/** Upload limit for a serial list file (10,000 serials of 40 characters fit with room to spare). */
export const SERIAL_CSV_MAX_BYTES = 512 * 1024;

/**
 * Reads a serial list file: either a column headed `serial` (any case; other columns are ignored)
 * or a single column with or without a `serial` header. Returns every candidate with the line it
 * came from, so bad rows can be reported by line; the rules themselves are checkSerialRows'.
 */
export function readSerialCsv(buf: Buffer): Array<{ serial: string; line: number }> {
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(buf);
  } catch {
    throw badRequest('The file is not UTF-8 text. Save it as CSV (UTF-8) and upload it again.');
  }
  let records: Array<{ record: string[]; info: { lines: number } }>;
  try {
    records = parse(text, {
      bom: true,
      info: true,
      relax_column_count: true,
      skip_empty_lines: false,
      trim: false,
    }) as unknown as Array<{ record: string[]; info: { lines: number } }>;
  } catch (e) {
    throw badRequest(`The file could not be read as CSV (${(e as Error).message}).`);
  }
  // A final blank line (trailing newline left by many editors) is not a row.
  while (records.length && records[records.length - 1].record.every((c) => c.trim() === '')) records.pop();
  if (records.length === 0) throw badRequest('The file is empty: give one serial per line, or a column headed "serial".');
  const header = records[0].record.map((c) => c.trim().toLowerCase());
  let column = header.indexOf('serial');
  let rows = records;
  if (column >= 0) rows = records.slice(1);
  else {
    const widest = Math.max(...records.map((r) => r.record.length));
    if (widest > 1) {
      throw badRequest(`The file has ${widest} columns and none is headed "serial". Add that header, or keep a single column of serials.`);
    }
    column = 0;
  }
  if (rows.length === 0) throw badRequest('The file has a "serial" header but no serials below it.');
  return rows.map((r) => ({ serial: r.record[column] ?? '', line: r.info.lines }));
}
