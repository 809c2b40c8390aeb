/**
 * Make-up planning (a run lost, excluded or tripped devices): the proposal a run's page shows and
 * the one-step booking of the make-up run into the same sample (shared/verdict/make-up.ts holds the rule).
 */
import { z } from 'zod';

const uuid = (what: string) => z.string().uuid(`Not a valid ${what} id`);

export const makeUpBookSchema = z.object({
  rigId: uuid('rig'),
  /** Start of the proposed slot; omitted = the earliest free start on the rig. */
  start: z.iso.datetime({ offset: true, message: 'Give a date and time (ISO 8601)' }).optional(),
  /** The make-up size the proposal showed: refused when the proposal has changed since. */
  makeUpSize: z.number().int('Whole devices only').positive('At least one device').max(256, 'A board holds at most 256 sockets'),
  /** The sample's booked size the proposal was made for (a second click finds it grown and is refused). */
  sampleBookedSize: z.number().int('Whole devices only').positive('At least one device'),
  /** Book despite blocking plan-check findings: an override request approved by a second person. */
  override: z.object({ requestId: uuid('override request') }).optional(),
});
export type MakeUpBookInput = z.infer<typeof makeUpBookSchema>;

export type MakeUpStatusView = 'nothing-to-restore' | 'possible' | 'failed-already' | 'too-few-fresh' | 'unavailable';

/** A device that left the sample or waits for a decision after a trip. */
export interface MakeUpLostDevice {
  serial: string;
  runCode: string;
  /** 'removed' (lost, damaged, excluded) or 'tripped' (no disposition yet). */
  kind: 'removed' | 'tripped';
  why: string;
}

export interface MakeUpSlot {
  rigId: string;
  rigCode: string;
  rigName: string;
  start: string;
  end: string;
}

export interface MakeUpView {
  runId: string;
  runCode: string;
  sampleId: string | null;
  lot: { id: string; code: string } | null;
  plan: { id: string; name: string; sampleSize: number; acceptNumber: number };
  confidence: number;
  status: MakeUpStatusView;
  /** Plain words: the proposal, or why there is none. */
  explanation: string;
  /** The rule the proposal follows (MAKE_UP_RULE). */
  rule: string;
  sampleBookedSize: number;
  /** Devices still in the sample, including those booked in runs not started yet. */
  valid: number;
  failures: number;
  lost: MakeUpLostDevice[];
  planLtpd: number;
  /** The LTPD the devices on test (valid less notStarted) demonstrate at the plan's accept number. */
  ltpdNow: number | null;
  makeUpSize: number;
  restoredLtpd: number | null;
  noFailureRoom: boolean;
  freshInLot: number;
  /** Devices booked in runs of the sample not started yet (a make-up booked): counted in `valid`, not in `ltpdNow`. */
  notStarted: number;
  /** The earliest rig time for the make-up run (the booking proposals), null when none is free or none is proposed. */
  slot: MakeUpSlot | null;
  /** Why no slot could be offered (problems and blocking plan-check findings from the proposals). */
  slotProblems: string[];
  /** Blocking plan-check findings: booking needs an approved override. */
  needsOverride: boolean;
}
