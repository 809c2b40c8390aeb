/**
 * The read-point file's columns, their words and units, and the upload limits — no zod here, so
 * screens that show them do not load the validation library (shared/schemas/measurements.ts
 * builds its schemas from these).
 */

/** Our column names, as a parametric tester's CSV would carry them after mapping. */
export const MEASUREMENT_COLUMNS = [
  'serial',
  'lot',
  'hfe',
  'hfe_ic_a',
  'hfe_vce_v',
  'icbo_a',
  'icbo_vcb_v',
  'vcesat_v',
  'bvceo_v',
  'temp_c',
  'measured_at',
  'result',
] as const;
export type MeasurementColumn = (typeof MEASUREMENT_COLUMNS)[number];

/** "Hfe IC (A)" → "hfe_ic_a": how a header is matched to our column names when not mapped. */
export const normaliseHeader = (h: string) =>
  h
    .trim()
    .toLowerCase()
    .replace(/[\s\-.()]+/g, '_')
    .replace(/_+$/g, '');

/** Our column a header names by itself, or null. */
const isMeasurementColumn = (s: string): s is MeasurementColumn => (MEASUREMENT_COLUMNS as readonly string[]).includes(s);
export const ownColumn = (h: string): MeasurementColumn | null => {
  const name = normaliseHeader(h);
  return isMeasurementColumn(name) ? name : null;
};

/** Columns a file must carry (after mapping); the others may be absent. */
export const REQUIRED_COLUMNS: readonly MeasurementColumn[] = [
  'serial',
  'hfe',
  'hfe_ic_a',
  'hfe_vce_v',
  'icbo_a',
  'icbo_vcb_v',
  'vcesat_v',
];

export const COLUMN_LABEL: Record<MeasurementColumn, string> = {
  serial: 'Serial',
  lot: 'Lot code (only when serials repeat across lots)',
  hfe: 'hFE',
  hfe_ic_a: 'IC for hFE',
  hfe_vce_v: 'VCE for hFE (V)',
  icbo_a: 'ICBO leakage',
  icbo_vcb_v: 'VCB for ICBO (V)',
  vcesat_v: 'VCE(sat)',
  bvceo_v: 'BVCEO (V)',
  temp_c: 'Measurement temperature (°C)',
  measured_at: 'Measured at (ISO date-time; no zone = UTC)',
  result: 'Result (empty = measured; OPEN, SHORT or NO READING for a dead device)',
};

/** Units chosen at upload; values are converted to SI (A, V) before storing. */
export const LEAKAGE_UNITS = ['pA', 'nA', 'uA', 'A'] as const;
export const CURRENT_UNITS = ['mA', 'A'] as const;
export const VOLTAGE_UNITS = ['mV', 'V'] as const;
export const UNIT_FACTOR: Record<string, number> = { pA: 1e-12, nA: 1e-9, uA: 1e-6, mA: 1e-3, mV: 1e-3, A: 1, V: 1 };
export const UNIT_LABEL: Record<string, string> = { pA: 'pA', nA: 'nA', uA: 'µA', mA: 'mA', mV: 'mV', A: 'A', V: 'V' };

export const UPLOAD_MAX_BYTES = 2 * 1024 * 1024;
export const UPLOAD_MAX_ROWS = 5000;

/** A reading's measured values and their test conditions, in SI units (A, V); null where not measured. */
export interface ReadingValues {
  hfe: number | null;
  hfeIcA: number | null;
  hfeVceV: number | null;
  icboA: number | null;
  icboVcbV: number | null;
  vcesatV: number | null;
  bvceoV: number | null;
}
