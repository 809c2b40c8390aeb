/**
 * The evidence a lot verdict stands on, over the API (/api/evidence): dispositions per device,
 * read-point coverage, confirmation of flagged readings, a sample's devices with their credited
 * hours. Rules in shared/evidence.
 */
import { z } from 'zod';
import { CONFIRM_REASON_MIN, DISPOSITION_KINDS, DISPOSITION_REASON_MIN, type DispositionKind, type MeasurementResult } from '../evidence';
import { num } from './devices';
import type { RecordDeviationKind } from '../domain/records';

const uuid = (what: string) => z.string().uuid(`Not a valid ${what} id`);

export const evidenceRunParamsSchema = z.object({ runId: uuid('run') });
export const evidenceSampleParamsSchema = z.object({ sampleId: uuid('sample') });
export const measurementIdParamsSchema = z.object({ id: uuid('measurement') });

export const dispositionInputSchema = z.object({
  serial: z.string().trim().min(1, 'Enter the serial').max(40),
  /** Only when serials repeat across the run's lots. */
  lot: z.string().trim().max(40).optional(),
  readPointH: num().min(0, 'Hours cannot be negative').max(100000),
  kind: z.enum(DISPOSITION_KINDS, { message: `Choose one of: ${DISPOSITION_KINDS.join(', ')}` }),
  reason: z.string().trim().min(DISPOSITION_REASON_MIN, `Say why (at least ${DISPOSITION_REASON_MIN} characters)`).max(2000),
});
export type DispositionInput = z.infer<typeof dispositionInputSchema>;

export const dispositionIdParamsSchema = z.object({ id: uuid('disposition') });

/** Withdrawing a disposition recorded by mistake (engineer; the old content stays in the audit trail). */
export const withdrawDispositionSchema = z.object({
  reason: z
    .string()
    .trim()
    .min(DISPOSITION_REASON_MIN, `Say why it is withdrawn (at least ${DISPOSITION_REASON_MIN} characters)`)
    .max(2000),
});
export type WithdrawDispositionInput = z.infer<typeof withdrawDispositionSchema>;

export const confirmReadingSchema = z.object({
  reason: z
    .string()
    .trim()
    .min(CONFIRM_REASON_MIN, `Say why the reading may be judged (at least ${CONFIRM_REASON_MIN} characters)`)
    .max(2000),
});
export type ConfirmReadingInput = z.infer<typeof confirmReadingSchema>;

export interface Disposition {
  id: string;
  runId: string;
  deviceId: string;
  serial: string;
  lotCode: string;
  readPointH: number;
  kind: DispositionKind;
  kindLabel: string;
  reason: string;
  byName: string;
  at: string;
}

export interface CoverageMissing {
  deviceId: string;
  serial: string;
  lotCode: string;
  runCode: string;
}

export interface ReadPointCoverageView {
  readPointH: number;
  /** Stress hours reached by every run of the sample (a read point not yet reached is not missing). */
  reached: boolean;
  expected: number;
  measured: number;
  catastrophic: number;
  disposed: number;
  deadEarlier: number;
  /** Readings flagged for differing conditions and not yet confirmed. */
  unconfirmed: number;
  missing: CoverageMissing[];
  complete: boolean;
}

export interface EvidenceDevice {
  deviceId: string;
  serial: string;
  lotId: string;
  lotCode: string;
  runId: string;
  runCode: string;
  rigCode: string | null;
  socketIndex: number;
  /** Credited stress hours from the socket's own accrual (stops at a trip). */
  creditedHours: number;
  tripped: boolean;
  trippedAt: string | null;
  failedAtH: number | null;
  disposition: Disposition | null;
}

export interface EvidenceReading {
  id: string;
  runId: string;
  deviceId: string;
  readPointH: number;
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
  late: boolean;
  conditionsFlag: string | null;
  confirmedAt: string | null;
  confirmedByName: string | null;
  confirmReason: string | null;
}

export interface SampleEvidence {
  sampleId: string;
  planId: string;
  plannedSize: number;
  bookedSize: number;
  /** Devices loaded over all runs. */
  loadedSize: number;
  deviation: { reason: string; byName: string | null; at: string } | null;
  runs: Array<{ id: string; code: string; rigCode: string | null; sampleSize: number; state: string; stressHours: number }>;
  readPointsH: number[];
  devices: EvidenceDevice[];
  coverage: ReadPointCoverageView[];
  /** Readings changed as a deviation (time zero after Start, a finished run changed, a failure withdrawn), oldest first. */
  recordDeviations: RecordDeviationView[];
}

export interface RecordDeviationView {
  runCode: string;
  serial: string;
  readPointH: number;
  version: number;
  kinds: RecordDeviationKind[];
  reason: string | null;
  byName: string | null;
  at: string;
}

export interface RunCoverage {
  runId: string;
  runCode: string;
  sampleId: string | null;
  readPoints: ReadPointCoverageView[];
  dispositions: Disposition[];
}
