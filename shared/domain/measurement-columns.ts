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

/** Our column a header names by itself ("hfe_ic_a", or with its unit: "IC (mA)", "icbo_na"), or null. */
const isMeasurementColumn = (s: string): s is MeasurementColumn => (MEASUREMENT_COLUMNS as readonly string[]).includes(s);
export const ownColumn = (h: string): MeasurementColumn | null => {
  const name = normaliseHeader(h);
  if (isMeasurementColumn(name)) return name;
  const split = splitHeaderUnit(h);
  return COLUMN_BY_BASE[normaliseHeader(split.base)] ?? null;
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
  hfe_vce_v: 'VCE for hFE',
  icbo_a: 'ICBO leakage',
  icbo_vcb_v: 'VCB for ICBO',
  vcesat_v: 'VCE(sat)',
  bvceo_v: 'BVCEO',
  temp_c: 'Measurement temperature (°C)',
  measured_at: 'Measured at (ISO date-time; no zone = UTC)',
  result: 'Result (empty = measured; OPEN, SHORT or NO READING for a dead device)',
};

/** Units a file may give its values in; values are converted to SI (A, V) before storing. */
export const CURRENT_UNITS = ['pA', 'nA', 'uA', 'mA', 'A'] as const;
export const VOLTAGE_UNITS = ['mV', 'V'] as const;
export type MeasurementUnit = (typeof CURRENT_UNITS)[number] | (typeof VOLTAGE_UNITS)[number];
export const UNIT_FACTOR: Record<MeasurementUnit, number> = { pA: 1e-12, nA: 1e-9, uA: 1e-6, mA: 1e-3, mV: 1e-3, A: 1, V: 1 };
export const UNIT_LABEL: Record<MeasurementUnit, string> = { pA: 'pA', nA: 'nA', uA: 'µA', mA: 'mA', mV: 'mV', A: 'A', V: 'V' };

/** The quantity each column with a unit holds; the unit is read from the file's header, never assumed. */
export const COLUMN_QUANTITY: Partial<Record<MeasurementColumn, 'current' | 'voltage'>> = {
  hfe_ic_a: 'current',
  hfe_vce_v: 'voltage',
  icbo_a: 'current',
  icbo_vcb_v: 'voltage',
  vcesat_v: 'voltage',
  bvceo_v: 'voltage',
};
const UNITS_OF: Record<'current' | 'voltage', readonly MeasurementUnit[]> = { current: CURRENT_UNITS, voltage: VOLTAGE_UNITS };

/** What each column holds, its unit and an example, as the upload card lists them (and the template carries). */
export const COLUMN_GUIDE: Record<MeasurementColumn, { unit: string; example: string; templateHeader: string }> = {
  serial: { unit: '–', example: 'H0001', templateHeader: 'serial' },
  lot: { unit: '–', example: 'HG2609-D', templateHeader: 'lot' },
  hfe: { unit: '– (ratio)', example: '72.1', templateHeader: 'hfe' },
  hfe_ic_a: { unit: 'pA, nA, µA, mA or A', example: '1', templateHeader: 'IC (A)' },
  hfe_vce_v: { unit: 'mV or V', example: '5', templateHeader: 'VCE (V)' },
  icbo_a: { unit: 'pA, nA, µA, mA or A', example: '35', templateHeader: 'ICBO (nA)' },
  icbo_vcb_v: { unit: 'mV or V', example: '80', templateHeader: 'VCB (V)' },
  vcesat_v: { unit: 'mV or V', example: '420', templateHeader: 'VCE(sat) (mV)' },
  bvceo_v: { unit: 'mV or V', example: '', templateHeader: 'BVCEO (V)' },
  temp_c: { unit: '°C', example: '25', templateHeader: 'temp_c' },
  measured_at: { unit: 'ISO date-time', example: '', templateHeader: 'measured_at' },
  result: { unit: '–', example: '', templateHeader: 'result' },
};

/** A CSV a tester can fill: our headers with units, one example row. */
export function templateCsv(): string {
  const cols = MEASUREMENT_COLUMNS.filter((c) => c !== 'lot');
  return `${cols.map((c) => COLUMN_GUIDE[c].templateHeader).join(',')}\n${cols.map((c) => COLUMN_GUIDE[c].example).join(',')}\n`;
}

/**
 * An example file as a tester might write it: units in the headers (mA, nA, mV), one dead device
 * (OPEN), the optional columns left out. Serials are the demo lab's invented ones.
 */
export function exampleCsv(): string {
  return (
    [
      'serial,hfe,IC (mA),VCE (V),ICBO [nA],VCB (V),VCE(sat)/mV,temp_c,result',
      'H0001,72.1,1000,5,35,80,420,25,',
      'H0002,70.3,1000,5,41,80,450,25,',
      'H0003,,,,,,,25,OPEN',
    ].join('\n') + '\n'
  );
}

/** Header base names (after normaliseHeader) that name our columns once the unit is taken off. */
const COLUMN_BY_BASE: Record<string, MeasurementColumn> = {
  hfe_ic: 'hfe_ic_a',
  ic: 'hfe_ic_a',
  hfe_vce: 'hfe_vce_v',
  vce: 'hfe_vce_v',
  icbo: 'icbo_a',
  icbo_vcb: 'icbo_vcb_v',
  vcb: 'icbo_vcb_v',
  vcesat: 'vcesat_v',
  vce_sat: 'vcesat_v',
  bvceo: 'bvceo_v',
};

const UNIT_WORDS: Record<string, MeasurementUnit> = {
  pa: 'pA',
  na: 'nA',
  ua: 'uA',
  µa: 'uA',
  μa: 'uA',
  ma: 'mA',
  a: 'A',
  mv: 'mV',
  v: 'V',
};
const unitWord = (w: string): MeasurementUnit | null => UNIT_WORDS[w.trim().toLowerCase()] ?? null;

/**
 * A header split into its name and the unit it states: "IC (mA)", "ICBO [nA]", "VCE(sat)/V",
 * "icbo_na", "hfe_ic_a". `unitText` is what stood in the unit's place (null when none): a bracket
 * or slash that does not hold a unit word is part of the name ("VCE(sat)").
 */
export function splitHeaderUnit(header: string): { base: string; unitText: string | null; unit: MeasurementUnit | null } {
  const h = header.trim();
  const bracket = /^(.*?)\s*[([]\s*([^()[\]]*?)\s*[)\]]\s*$/.exec(h);
  if (bracket && bracket[1]) {
    const u = unitWord(bracket[2]);
    if (u) return { base: bracket[1], unitText: bracket[2], unit: u };
    // "VCE(sat)": a name's own bracket; anything else in brackets is an unknown unit.
    if (!/^sat$/i.test(bracket[2])) return { base: bracket[1], unitText: bracket[2], unit: null };
  }
  const slash = /^(.*?)\s*\/\s*([^/]+)$/.exec(h);
  if (slash && slash[1]) return { base: slash[1], unitText: slash[2], unit: unitWord(slash[2]) };
  const suffix = /^(.*?)[\s_]+([pnuµμm]?[av])$/i.exec(h);
  if (suffix && suffix[1]) return { base: suffix[1], unitText: suffix[2], unit: unitWord(suffix[2]) };
  return { base: h, unitText: null, unit: null };
}

/**
 * The unit of the header chosen for a column, or the column-level problem in words: no unit at all
 * ("write it in the header") or one that is not a unit of this quantity. Columns without a unit
 * (serial, hFE, °C, dates) always pass.
 */
export function columnUnit(column: MeasurementColumn, header: string): { unit: MeasurementUnit | null; problem: string | null } {
  const quantity = COLUMN_QUANTITY[column];
  if (!quantity) return { unit: null, problem: null };
  const allowed = UNITS_OF[quantity];
  const { unit, unitText } = splitHeaderUnit(header);
  const words = allowed.map((u) => UNIT_LABEL[u]).join(', ');
  const example = `"${COLUMN_GUIDE[column].templateHeader}"`;
  if (unitText === null) {
    return {
      unit: null,
      problem: `Column "${header}" (${COLUMN_LABEL[column]}) states no unit; write it in the header, e.g. ${example} (${words}).`,
    };
  }
  if (!unit || !allowed.includes(unit)) {
    return {
      unit: null,
      problem: `Column "${header}" (${COLUMN_LABEL[column]}) gives the unit "${unitText}", which is not one of ${words}.`,
    };
  }
  return { unit, problem: null };
}

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
