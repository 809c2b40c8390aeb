/** Re-planning after a rig drops out (/api/replan) and rig utilisation (/api/utilisation). */
import { z } from 'zod';

export const REPLAN_KINDS = ['move', 'in-place'] as const;
export type ReplanKind = (typeof REPLAN_KINDS)[number];
export const REPLAN_STATES = ['open', 'accepted', 'superseded'] as const;
export type ReplanState = (typeof REPLAN_STATES)[number];
/** What the delay is measured against: the run's due date when it has one, else its booked finish. */
export type DelayBasis = 'due-date' | 'booked-finish';

export const replanIdParamSchema = z.object({ id: z.string().uuid('Not a valid re-plan proposal id') });

export const acceptReplanSchema = z
  .object({
    note: z.string().trim().max(500, 'At most 500 characters').optional(),
  })
  .strict();
export type AcceptReplanInput = z.infer<typeof acceptReplanSchema>;

export const replanListQuerySchema = z.object({ state: z.enum(REPLAN_STATES).optional() }).strict();

export interface ReplanProposal {
  id: string;
  runId: string;
  runCode: string;
  kind: ReplanKind;
  state: ReplanState;
  /** Why the run needs a new place ("Oven OV-03 went offline"). */
  reason: string;
  fromRigCode: string;
  toRigCode: string;
  fromStart: string | null;
  fromEnd: string | null;
  startAt: string;
  endAt: string;
  dueAt: string | null;
  delayBasis: DelayBasis;
  /** Hours the proposed finish lies past the due date (or the booked finish); negative = earlier. */
  delayH: number;
  createdAt: string;
  decidedBy: string | null;
  decidedAt: string | null;
}

/** A running run on a rig that is offline or in maintenance: it waits in place (no proposal). */
export interface HeldRun {
  runId: string;
  runCode: string;
  rigCode: string;
  state: string;
  stressHours: number;
  note: string;
}

export interface ReplanList {
  items: ReplanProposal[];
  held: HeldRun[];
}

export const utilisationQuerySchema = z
  .object({
    /** The last week shown is the one holding this date (default now). */
    to: z.string().datetime({ offset: true, message: 'Not an ISO date-time' }).optional(),
    weeks: z.coerce.number().int('Whole weeks').min(1, 'At least 1 week').max(26, 'At most 26 weeks').default(8),
  })
  .strict();
export type UtilisationQuery = z.infer<typeof utilisationQuerySchema>;

export interface UtilisationRow {
  rigCode: string;
  weekStart: string;
  bookedSh: number;
  stressedSh: number;
  idleSh: number;
  lostSh: number;
}

export interface TurnaroundLot {
  lotCode: string;
  requestedAt: string;
  signedAt: string;
  hours: number;
}

export interface Utilisation {
  weeks: string[];
  rigs: string[];
  rows: UtilisationRow[];
  turnaround: { medianH: number | null; lots: TurnaroundLot[] };
  definitions: Record<string, string>;
}
