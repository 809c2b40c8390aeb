/**
 * Make-up planning (a run lost, excluded or tripped devices): the proposal a run's page shows and
 * the one-step booking of the make-up run into the same sample (shared/verdict/make-up.ts holds the rule).
 */
import { z } from 'zod';
import type { RunDetail } from './runs';

const uuid = (what: string) => z.string().uuid(`Not a valid ${what} id`);

export const makeUpBookSchema = z.object({
  rigId: uuid('rig'),
  /** Start of the proposed slot; omitted = the earliest free start on the rig. */
  start: z.iso.datetime({ offset: true, message: 'Give a date and time (ISO 8601)' }).optional(),
  /** The make-up size the proposal showed (all lots together): refused when the proposal has changed since. */
  makeUpSize: z.number().int('Whole devices only').positive('At least one device').max(256, 'A board holds at most 256 sockets'),
  /** The sample's booked size the proposal was made for (a second click finds it grown and is refused). */
  sampleBookedSize: z.number().int('Whole devices only').positive('At least one device'),
  /**
   * Each lot's make-up as the proposal showed it (a run over several lots): refused when any lot's
   * size differs now. Omitted = the proposal's lots, checked by the total only.
   */
  lots: z
    .array(
      z.object({
        lotId: uuid('lot'),
        makeUpSize: z.number().int('Whole devices only').positive('At least one device').max(256, 'A board holds at most 256 sockets'),
      }),
    )
    .min(1, 'Name at least one lot')
    .max(64, 'At most 64 lots')
    .optional(),
  /** Book despite blocking plan-check findings: an override request approved by a second person. */
  override: z.object({ requestId: uuid('override request') }).optional(),
});
export type MakeUpBookInput = z.infer<typeof makeUpBookSchema>;

export type MakeUpStatusView = 'nothing-to-restore' | 'possible' | 'failed-already' | 'too-few-fresh' | 'unavailable';

/** A device that left the sample or waits for a decision after a trip. */
export interface MakeUpLostDevice {
  serial: string;
  runCode: string;
  /** The device's lot. */
  lotCode: string;
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

/**
 * One lot's part of the proposal. The verdict judges each lot of a run on its own (its devices
 * against the plan's n and c, shared/verdict/judge.ts), so a make-up restores each lot separately,
 * with fresh devices of that lot in a run of its own.
 */
export interface MakeUpLotView {
  lot: { id: string; code: string };
  status: MakeUpStatusView;
  /** Plain words: this lot's make-up, or why it has none. */
  explanation: string;
  /** Devices of this lot in the sample (the verdict's count, plus make-up sockets booked but not loaded). */
  booked: number;
  /** Devices of this lot still in the sample, including those booked in runs not started yet. */
  valid: number;
  failures: number;
  /** How many of `lost` are this lot's. */
  lostCount: number;
  /** The LTPD this lot's devices on test (valid less notStarted) demonstrate at the plan's accept number. */
  ltpdNow: number | null;
  makeUpSize: number;
  restoredLtpd: number | null;
  noFailureRoom: boolean;
  freshInLot: number;
  /** Devices of this lot booked in runs of the sample not started yet (a make-up booked): counted in `valid`, not in `ltpdNow`. */
  notStarted: number;
}

export interface MakeUpView {
  runId: string;
  runCode: string;
  sampleId: string | null;
  plan: { id: string; name: string; sampleSize: number; acceptNumber: number };
  confidence: number;
  /** 'possible' when any lot has a make-up to book; else the most serious of the lots' states. */
  status: MakeUpStatusView;
  /** Plain words: the proposal, or why there is none. */
  explanation: string;
  /** The rule the proposal follows (MAKE_UP_RULE). */
  rule: string;
  sampleBookedSize: number;
  /** Every lot's lost, excluded and undecided tripped devices. */
  lost: MakeUpLostDevice[];
  planLtpd: number;
  /** Fresh devices to book, all lots together (the sum of the lots' makeUpSize). */
  makeUpSize: number;
  /** Each lot of the run (by code), with its own figures and make-up. */
  lots: MakeUpLotView[];
  /** The earliest rig time for the make-up (all lots' runs side by side on one rig), null when none is free or none is proposed. */
  slot: MakeUpSlot | null;
  /** Why no slot could be offered (problems and blocking plan-check findings from the proposals). */
  slotProblems: string[];
  /** Blocking plan-check findings: booking needs an approved override. */
  needsOverride: boolean;
}

/** What booking a make-up answers: one run per lot made up, in the same sample. */
export interface MakeUpBooking {
  runs: RunDetail[];
}
