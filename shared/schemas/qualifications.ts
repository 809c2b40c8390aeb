/**
 * Qualifications (issue #22): a device type or family through a template's stress groups × lots.
 *
 *   GET   /api/qualifications/templates                       the templates (groups, sources)
 *   GET   /api/qualifications                                 every qualification with its status
 *   POST  /api/qualifications                                 create from a template
 *   GET   /api/qualifications/:id                             the matrix: cells, runs, states, projection
 *   PATCH /api/qualifications/:id/cells/:cellId               planned sample / accept number
 *   POST  /api/qualifications/:id/cells/:cellId/waiver        waive a cell, with a reason
 *   POST  /api/qualifications/:id/cells/:cellId/external      a result from outside (ESD, DPA, …)
 *   POST  /api/qualifications/:id/cells/:cellId/withdraw      withdraw the cell's waiver or outside result, with a reason
 *   GET   /api/qualifications/:id/cells/:cellId/drift         the cell's drift (its judged runs, this lot's devices)
 *   GET   /api/qualifications/:id/report.pdf | report.csv     the qualification report
 */
import { z } from 'zod';
import type { LotVerdict } from '../domain/verdicts';
import type { LotDetail } from './analytics';
import {
  FAMILY_RULE_MIN,
  QUAL_TEMPLATE_KEYS,
  WAIVER_REASON_MIN,
  type CellState,
  type QualGroup,
  type QualificationStatus,
  type QualTemplate,
  type QualTemplateKey,
} from '../qualification/templates';

const uuid = (what: string) => z.string().uuid(`Not a valid ${what} id`);

export const qualificationParamsSchema = z.object({ id: uuid('qualification') });
export const qualificationCellParamsSchema = z.object({ id: uuid('qualification'), cellId: uuid('cell') });

export const createQualificationSchema = z
  .object({
    name: z.string().trim().min(3, 'Name the qualification (at least 3 characters)').max(160),
    templateKey: z.enum(QUAL_TEMPLATE_KEYS, 'Choose a template: AEC-Q101, JESD47 or MIL-PRF-19500'),
    deviceTypeIds: z.array(uuid('device type')).min(1, 'Choose at least one device type').max(12, 'At most 12 device types'),
    lotIds: z.array(uuid('lot')).min(1, 'Choose at least one lot').max(12, 'At most 12 lots'),
    familyRule: z.string().trim().max(2000).default(''),
  })
  .superRefine((v, ctx) => {
    if (new Set(v.deviceTypeIds).size !== v.deviceTypeIds.length)
      ctx.addIssue({ code: 'custom', path: ['deviceTypeIds'], message: 'A device type is listed twice' });
    if (new Set(v.lotIds).size !== v.lotIds.length) ctx.addIssue({ code: 'custom', path: ['lotIds'], message: 'A lot is listed twice' });
    if (v.deviceTypeIds.length > 1 && v.familyRule.length < FAMILY_RULE_MIN)
      ctx.addIssue({
        code: 'custom',
        path: ['familyRule'],
        message: `A family needs its generic-data rule in words (at least ${FAMILY_RULE_MIN} characters): which data stands for which device type, and why`,
      });
  });
export type CreateQualificationInput = z.infer<typeof createQualificationSchema>;

export const updateCellSchema = z
  .object({
    plannedSample: z.number().int('Whole devices only').positive('At least one device').max(1000).optional(),
    acceptNumber: z.number().int('Whole devices only').min(0).max(50).optional(),
  })
  .refine((v) => v.plannedSample !== undefined || v.acceptNumber !== undefined, 'Change the planned sample or the accept number');
export type UpdateCellInput = z.infer<typeof updateCellSchema>;

export const waiveCellSchema = z.object({
  reason: z
    .string({ error: 'A waiver needs a reason' })
    .trim()
    .min(WAIVER_REASON_MIN, `Write at least ${WAIVER_REASON_MIN} characters on why the group may be waived`)
    .max(2000),
});
export type WaiveCellInput = z.infer<typeof waiveCellSchema>;

export const externalResultSchema = z.object({
  result: z.enum(['pass', 'fail'], 'The result is pass or fail'),
  by: z.string().trim().min(2, 'Who did the test (person or laboratory)').max(120),
  at: z.iso.datetime({ offset: true, message: 'When: give an ISO date and time' }),
  document: z.string().trim().min(2, 'The report or document reference').max(200),
});
export type ExternalResultInput = z.infer<typeof externalResultSchema>;

export const WITHDRAWABLE_RECORDS = ['waiver', 'external'] as const;
export type WithdrawableRecord = (typeof WITHDRAWABLE_RECORDS)[number];

export const withdrawCellSchema = z.object({
  record: z.enum(WITHDRAWABLE_RECORDS, 'Say what to withdraw: the waiver or the outside result'),
  reason: z
    .string({ error: 'A withdrawal needs a reason' })
    .trim()
    .min(WAIVER_REASON_MIN, `Write at least ${WAIVER_REASON_MIN} characters on why it is withdrawn`)
    .max(2000),
});
export type WithdrawCellInput = z.infer<typeof withdrawCellSchema>;

/** A waiver or outside result withdrawn from the cell: what it said, and who withdrew it, when and why. */
export interface QualCellWithdrawal {
  record: WithdrawableRecord;
  /** The withdrawn record in words (the waiver's reason; the outside result's pass/fail, laboratory and document). */
  text: string;
  recordedBy: string;
  recordedAt: string;
  reason: string;
  by: string;
  at: string;
}

export interface QualTemplateView extends QualTemplate {
  key: QualTemplateKey;
}

export interface QualCellRun {
  id: string;
  code: string;
  state: string;
  rigCode: string | null;
  planName: string;
  stressHours: number;
  /** Projected end of a booked or running run (the scheduler's window), ISO. */
  projectedEnd: string | null;
}

export interface QualCellView {
  id: string;
  groupKey: string;
  lotId: string;
  lotCode: string;
  planKind: string | null;
  plannedSample: number;
  acceptNumber: number;
  state: CellState;
  /** The lot verdict's judgement of this kind on this lot (shared/verdict/judge.ts), when there is one. */
  verdict: LotVerdict | null;
  verdictReasons: string[];
  sample: { booked: number; judged: number; failures: number } | null;
  fit: { fit60: number; fit90: number; mechanismLabel: string; method: string } | null;
  runs: QualCellRun[];
  waiver: { reason: string; by: string; at: string } | null;
  external: { result: 'pass' | 'fail'; by: string; at: string; document: string; recordedBy: string } | null;
  /** Waivers and outside results withdrawn from this cell, oldest first (kept on record). */
  withdrawn: QualCellWithdrawal[];
  /** When the cell can be done: its runs' projected end, or the best proposal for a new run. */
  projectedFinish: string | null;
  projectionNote: string | null;
}

export interface QualificationSummary {
  id: string;
  code: string;
  name: string;
  templateKey: QualTemplateKey;
  templateName: string;
  deviceTypes: Array<{ id: string; partNumber: string }>;
  lots: Array<{ id: string; code: string; deviceTypeId: string }>;
  status: QualificationStatus;
  cellsDone: number;
  cellsTotal: number;
  createdAt: string;
}

export interface QualificationDetail extends QualificationSummary {
  standard: string;
  sequence: string;
  sequenceBasis: 'published' | 'memory';
  familyRule: string;
  groups: QualGroup[];
  cells: QualCellView[];
  shortLots: Array<{ groupKey: string; wanted: number; chosen: number }>;
  /** What is left, in words, one line per open cell or missing lot. */
  left: string[];
  projectedFinish: string | null;
  projectionNote: string | null;
}

/**
 * A cell's drift: the lot's devices on the runs its verdict judged (the sample of the cell's kind),
 * in the shape the lot screen's spread chart reads (read-point distributions and the typical
 * device's fitted path, with the plan's limits).
 */
export interface QualCellDrift extends Pick<LotDetail, 'lotCode' | 'criteria' | 'readPointsH' | 'readPoints' | 'trends'> {
  cellId: string;
  groupKey: string;
  planName: string | null;
  runCodes: string[];
  plan: { durationH: number } | null;
  /** Why there is nothing to chart, else null. */
  note: string | null;
}
