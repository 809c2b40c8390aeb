/**
 * Read-point measurements: CSV upload from a parametric tester, manual entry, and the drift of
 * each device from time zero. The app and the server import the same schemas.
 *
 * Routes live under /api/measurements (the runs module owns /api/runs):
 *   GET  /api/measurements/runs                                       runs with read points
 *   GET  /api/measurements/runs/:runId                                devices (socket map) + read-point status
 *   POST /api/measurements/runs/:runId/read-points/:hours/upload      multipart `file` (+ `preview=1`)
 *   POST /api/measurements/runs/:runId/read-points/:hours/measurements  JSON array (manual entry)
 *   GET  /api/measurements/runs/:runId/read-points/:hours             stored readings of a read point
 *   GET  /api/measurements/runs/:runId/drift                          drift per device
 *   POST /api/measurements/readings/:id/corrections                   a new version of one reading, with its reason
 *   GET  /api/measurements/runs/:runId/devices/:deviceId/history      every version of a device's readings
 *   GET  /api/measurements/runs/:runId/uploads                        stored uploads, each with its file's path
 *   GET  /api/measurements/uploads/:uploadId/file                     the uploaded file, byte for byte
 */
import { z } from 'zod';
import type { ReadingValues } from '../domain/measurement-columns';
import { num } from './devices';
import { MEASUREMENT_RESULTS, type MeasurementResult } from '../evidence';
import { CORRECTION_REASON_MIN, type RecordDeviationKind } from '../domain/records';

import { MEASUREMENT_COLUMNS, type MeasurementColumn } from '../domain/measurement-columns';
export {
  MEASUREMENT_COLUMNS,
  type MeasurementColumn,
  normaliseHeader,
  ownColumn,
  REQUIRED_COLUMNS,
  COLUMN_LABEL,
  CURRENT_UNITS,
  VOLTAGE_UNITS,
  UNIT_FACTOR,
  UNIT_LABEL,
  COLUMN_QUANTITY,
  COLUMN_GUIDE,
  columnUnit,
  splitHeaderUnit,
  templateCsv,
  type MeasurementUnit,
} from '../domain/measurement-columns';

/** The file's header names → ours, e.g. { "Serial No": "serial", "Ib leak": "icbo_a" }. */
export const columnMappingSchema = z.record(z.string().trim().min(1).max(100), z.enum(MEASUREMENT_COLUMNS)).refine(
  (m) => {
    const targets = Object.values(m);
    return new Set(targets).size === targets.length;
  },
  { message: 'Two file columns are mapped to the same field' },
);
export type ColumnMapping = z.infer<typeof columnMappingSchema>;

/** A reason for a correction or a deviation (CORRECTION_REASON_MIN characters at least). */
export const correctionReasonSchema = z
  .string()
  .trim()
  .min(CORRECTION_REASON_MIN, `Give the reason for the change in at least ${CORRECTION_REASON_MIN} characters`)
  .max(500, 'Keep the reason under 500 characters');

/** A multipart text field holding JSON (the mapping) → parsed object, or the default when absent. Units come from the file's headers. */
const jsonField = <T extends z.ZodType>(schema: T) =>
  z.preprocess((v, ctx) => {
    if (v === undefined || v === '') return undefined;
    if (typeof v !== 'string') return v;
    try {
      return JSON.parse(v);
    } catch {
      ctx.addIssue({ code: 'custom', message: 'Not valid JSON' });
      return z.NEVER;
    }
  }, schema);

/** Text fields of the multipart upload (besides `file`). */
export const uploadFieldsSchema = z.object({
  mapping: jsonField(columnMappingSchema.default({})),
  /** Refused: each column's unit is read from its header, so a unit chosen beside the file could only disagree with it. */
  units: z
    .never({ message: 'Units are read from the file’s column headers, e.g. "IC (mA)" or "ICBO [nA]"; do not send them separately' })
    .optional(),
  /** Temperature assumed for rows without temp_c. */
  defaultTempC: z.coerce.number().finite().min(-65).max(300).default(25),
  /** Why this file replaces stored values (needed when it does; shared/domain/records.ts). */
  reason: correctionReasonSchema.optional(),
});
export type UploadFields = z.infer<typeof uploadFieldsSchema>;

export const readPointParamsSchema = z.object({
  runId: z.string().uuid('Not a valid run id'),
  hours: z.coerce.number().finite().min(0, 'Hours cannot be negative').max(100000),
});
export const runParamsSchema = z.object({ runId: z.string().uuid('Not a valid run id') });

export const uploadQuerySchema = z.object({
  /** preview=1: check every row and store nothing. */
  preview: z
    .enum(['0', '1', 'true', 'false'])
    .optional()
    .transform((v) => v === '1' || v === 'true'),
});

/** Upload limits. */
export { UPLOAD_MAX_BYTES, UPLOAD_MAX_ROWS } from '../domain/measurement-columns';

/** A reading's values, SI units (shared by manual entry and a correction). */
const readingValuesShape = {
  result: z.enum(MEASUREMENT_RESULTS).default('measured'),
  hfe: num().positive('hFE must be above 0').max(100000).nullable().optional(),
  hfeIcA: num().positive().max(1000).nullable().optional(),
  hfeVceV: num().positive().max(10000).nullable().optional(),
  icboA: num().min(0, 'Leakage cannot be negative').max(1).nullable().optional(),
  icboVcbV: num().positive().max(10000).nullable().optional(),
  vcesatV: num().min(0).max(100).nullable().optional(),
  bvceoV: num().positive().max(10000).nullable().optional(),
  measuredC: num().min(-65).max(300).default(25),
  measuredAt: z.string().datetime({ offset: true, message: 'Use an ISO date-time' }).optional(),
};

/** A dead device (result open / short / no-reading) comes without values; a measured one needs them all (BVCEO optional). */
function requireValues(
  r: { result: MeasurementResult } & Partial<Record<'hfe' | 'hfeIcA' | 'hfeVceV' | 'icboA' | 'icboVcbV' | 'vcesatV', number | null>>,
  ctx: z.RefinementCtx,
) {
  if (r.result !== 'measured') return;
  for (const k of ['hfe', 'hfeIcA', 'hfeVceV', 'icboA', 'icboVcbV', 'vcesatV'] as const) {
    if (r[k] === null || r[k] === undefined) {
      ctx.addIssue({ code: 'custom', path: [k], message: 'Enter a value, or choose open, short or no reading for a dead device' });
    }
  }
}

/**
 * One device's reading entered by hand, SI units. A dead device (result open / short / no-reading)
 * is entered without values; a measured one needs them all (BVCEO optional). `reason` is needed
 * when the entry replaces a stored value or is a deviation (shared/domain/records.ts).
 */
export const manualReadingSchema = z
  .object({
    serial: z.string().trim().min(1, 'Enter the serial').max(40),
    lot: z.string().trim().max(40).optional(),
    ...readingValuesShape,
    reason: correctionReasonSchema.optional(),
  })
  .superRefine(requireValues);
export const manualEntrySchema = z
  .array(manualReadingSchema)
  .min(1, 'Enter at least one device')
  .max(50, 'Enter at most 50 devices at a time; upload a file for more');

/** POST /api/measurements/readings/:id/corrections: the reading's new values and why (always). */
export const correctionSchema = z
  .object({ ...readingValuesShape, reason: correctionReasonSchema })
  .strict()
  .superRefine(requireValues);
export type CorrectionInput = z.infer<typeof correctionSchema>;

export const readingParamsSchema = z.object({ id: z.string().uuid('Not a valid reading id') });
export const uploadParamsSchema = z.object({ uploadId: z.string().uuid('Not a valid upload id') });
export const deviceHistoryParamsSchema = z.object({
  runId: z.string().uuid('Not a valid run id'),
  deviceId: z.string().uuid('Not a valid device id'),
});
export type ManualReading = z.infer<typeof manualReadingSchema>;

// ---------------------------------------------------------------------------------------------
// Responses
// ---------------------------------------------------------------------------------------------

export type RowOutcome = 'insert' | 'replace' | 'unchanged' | 'rejected';

export interface RowResult {
  /** Line in the file (header = 1), or position in the JSON array (first = 1). */
  row: number;
  serial: string | null;
  outcome: RowOutcome;
  /** Why a row was refused, one sentence each. */
  reasons: string[];
  late: boolean;
  /** Converted values (SI) for rows that can be stored. */
  values?: {
    result: MeasurementResult;
    hfe: number | null;
    hfeIcA: number | null;
    hfeVceV: number | null;
    icboA: number | null;
    icboVcbV: number | null;
    vcesatV: number | null;
    bvceoV: number | null;
    measuredC: number;
    measuredAt: string;
  };
  /** Why the row's measuring conditions differ from the device's time zero (judged only once confirmed). */
  conditionsFlag?: string | null;
}

export interface UploadResult {
  /** preview: checked, nothing stored; stored: rows written; already-stored: same file seen before for this run. */
  status: 'preview' | 'stored' | 'already-stored';
  runId: string;
  readPointH: number;
  fileName: string;
  fileSha256: string;
  uploadId: string | null;
  rowsTotal: number;
  /** Rows that were (or in a preview, would be) written: inserted + replaced. */
  stored: number;
  inserted: number;
  replaced: number;
  unchanged: number;
  rejected: number;
  late: number;
  /** Header → our column, as applied. */
  columns: Record<string, MeasurementColumn | null>;
  rows: RowResult[];
  /** Plain-language notes (e.g. the rule for re-uploads). */
  notes: string[];
  previousUpload?: { id: string; readPointH: number; createdAt: string; rowsStored: number; rowsRejected: number };
}

export interface RunDevice {
  deviceId: string;
  serial: string;
  lotId: string;
  lotCode: string;
  socketIndex: number;
  tripped: boolean;
  failedAtH: number | null;
}

export interface RunReadPointStatus {
  hours: number;
  measured: number;
  late: number;
  /** Stress hours reached (a read point after the accrued hours cannot be measured yet). */
  reached: boolean;
}

export interface MeasurementRunSummary {
  id: string;
  code: string;
  state: string;
  planId: string;
  planName: string;
  planKind: string;
  deviceTypeId: string;
  partNumber: string;
  rigCode: string | null;
  stressHours: number;
  durationH: number;
  biasRemovedAt: string | null;
  startedAt: string | null;
  lots: Array<{ id: string; code: string }>;
  deviceCount: number;
  readPoints: RunReadPointStatus[];
}

export interface MeasurementRunDetail extends MeasurementRunSummary {
  devices: RunDevice[];
}

export interface StoredReading extends ReadingValues {
  id: string;
  deviceId: string;
  serial: string;
  lotCode: string;
  readPointH: number;
  measuredC: number;
  measuredAt: string;
  late: boolean;
  uploadId: string | null;
  manual: boolean;
  result: MeasurementResult;
  conditionsFlag: string | null;
  confirmedAt: string | null;
  /** 1 = as first entered; more = corrected (the earlier versions are in the device's history). */
  version: number;
  /** Why the current version replaced the one before. */
  changeReason: string | null;
  /** Deviation kinds the current version recorded on the lot (labels in shared/domain/records.ts). */
  deviation: RecordDeviationKind[];
}

/** One version of a reading (GET …/runs/:runId/devices/:deviceId/history). */
export interface ReadingVersion extends ReadingValues {
  measurementId: string;
  readPointH: number;
  version: number;
  current: boolean;
  result: MeasurementResult;
  measuredC: number;
  measuredAt: string;
  late: boolean;
  uploadId: string | null;
  fileName: string | null;
  enteredByName: string | null;
  reason: string | null;
  deviation: RecordDeviationKind[];
  recordedAt: string;
}

export interface DeviceHistory {
  runId: string;
  runCode: string;
  deviceId: string;
  serial: string;
  lotCode: string;
  versions: ReadingVersion[];
}

/** An upload's record (GET /api/measurements/runs/:runId/uploads); the file is at `downloadPath`. */
export interface UploadRecord {
  id: string;
  readPointH: number;
  fileName: string;
  fileSha256: string;
  sizeBytes: number | null;
  rowsTotal: number;
  rowsStored: number;
  rowsRejected: number;
  uploadedByName: string | null;
  createdAt: string;
  /** Null when the upload predates keeping files (only its hash was stored then). */
  downloadPath: string | null;
}

export interface ParameterDriftView {
  parameter: 'hfe' | 'icbo' | 'vcesat';
  initial: number | null;
  reading: number | null;
  changePct: number | null;
  ratio: number | null;
  delta: number | null;
  allowed: { low: number; high: number } | null;
  pass: boolean | null;
  reason: string;
}

export interface DeviceReadPointDrift {
  readPointH: number;
  measuredC: number;
  hfeRaw: number | null;
  /** hFE referred to the device type's reference temperature (equals hfeRaw when measured there). */
  hfe: number | null;
  hfeNormalised: boolean;
  hfeNote: string | null;
  icboA: number | null;
  vcesatV: number | null;
  late: boolean;
  /** null at time zero. */
  parameters: ParameterDriftView[] | null;
  pass: boolean | null;
  failed: Array<'hfe' | 'icbo' | 'vcesat'>;
}

export interface DeviceDriftView {
  deviceId: string;
  serial: string;
  lotId: string;
  lotCode: string;
  socketIndex: number;
  status: 'pass' | 'fail' | 'no-time-zero' | 'not-measured';
  /** First read point at which any parameter broke the plan's criteria. */
  firstFailedH: number | null;
  readPoints: DeviceReadPointDrift[];
}

export interface RunDriftResult {
  runId: string;
  runCode: string;
  criteria: { hfeChangePct: number; leakageMultiple: number; leakageFloorA: number; vcesatShiftV: number };
  readPointsH: number[];
  gainReference: { referenceC: number; xtb: number; law: string; source: string };
  devices: DeviceDriftView[];
}
