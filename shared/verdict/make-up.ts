/**
 * Make-up planning: when devices of a sample are lost, damaged, excluded or tripped (and not yet
 * decided), the devices left may no longer demonstrate the LTPD the plan promised. This proposes
 * the make-up sample that restores it, or says why none can. Pure; no I/O.
 *
 * The rule (MAKE_UP_RULE): a make-up run of k fresh devices from the same lot, under the same plan
 * (full duration, same read points and end points), judged together with the devices still in the
 * sample as one sample; k restores the plan's sample size n, and the accept number c stays the
 * plan's. Adding devices to an LTPD sample that lost some in handling is common practice; that
 * MIL-PRF-19500's LTPD sampling lets a sample be made up this way is from memory — confirm against
 * the standard's current wording before relying on it.
 *
 * A make-up never repairs failures: when the failures counted so far exceed c the sample has
 * already failed, and a larger sample with a higher accept number (a resubmission) is a separate
 * decision under the lab's quality rules, not offered here.
 */
import { demonstratedLtpd } from '../reliability';

export const MAKE_UP_RULE =
  'A make-up run of fresh devices from the same lot, under the same plan (full duration, same read points and end points), is judged together with the devices still in the sample as one sample: the make-up restores the plan’s sample size and the accept number stays the plan’s (common practice).';

export interface MakeUpInput {
  /** The plan's sample size n. */
  planned: number;
  /** The plan's accept number c. */
  acceptNumber: number;
  /** Confidence the LTPD is demonstrated at (LTPD_CONFIDENCE). */
  confidence: number;
  /** Devices booked in the sample (all its runs). */
  booked: number;
  /** Devices out of the sample: lost, damaged in handling, excluded (not failures). */
  removed: number;
  /** Tripped devices with no disposition yet: not judged until decided, so not counted as still valid. */
  undecidedTrips: number;
  /** Failures counted so far (catastrophic results, end points beyond limits, trips counted as failures). */
  failures: number;
  /** Devices of the lot never placed in any run (the fresh devices a make-up can draw from). */
  freshInLot: number;
  /**
   * Devices booked in runs of the sample that have not started (a make-up booked already): they count
   * towards the sample the plan asks for, but demonstrate nothing until stressed and read. Default 0.
   */
  notStarted?: number;
}

export type MakeUpStatus = 'nothing-to-restore' | 'possible' | 'failed-already' | 'too-few-fresh';

export interface MakeUpProposal {
  status: MakeUpStatus;
  /** Devices still valid: booked less removed and undecided trips (failures stay in the sample). */
  valid: number;
  /** The LTPD the plan's (n, c) demonstrates. */
  planLtpd: number;
  /** Devices booked in runs not started yet (counted in `valid`, not in `ltpdNow`). */
  notStarted: number;
  /** The LTPD the valid devices on test (valid less notStarted) demonstrate at the plan's accept number; null when c ≥ that. */
  ltpdNow: number | null;
  /** Fresh devices the make-up needs (0 when nothing is to restore or it is impossible). */
  makeUpSize: number;
  /** The sample after the make-up (valid + makeUpSize). */
  restoredSize: number;
  /** The LTPD the restored sample demonstrates at c; null when no make-up is proposed. */
  restoredLtpd: number | null;
  /** Plain words: what the proposal is, or why there is none. */
  explanation: string;
  /** When failures so far already equal c (c > 0): any failure among the make-up devices fails the sample. */
  noFailureRoom: boolean;
}

const wholeAtLeast = (x: number, min: number) => Number.isInteger(x) && x >= min;

/** The LTPD n devices with accept number c demonstrate, or null when c ≥ n (nothing is demonstrated). */
function ltpdOf(n: number, c: number, confidence: number): number | null {
  return n > c ? demonstratedLtpd({ sampleSize: n, acceptNumber: c, confidence }) : null;
}

const pct = (x: number) => `${(x * 100).toFixed(2)} %`;

/** The make-up sample that restores the plan's demonstrated LTPD (MAKE_UP_RULE), or why there is none. */
export function proposeMakeUp(input: MakeUpInput): MakeUpProposal {
  const { planned, acceptNumber: c, confidence, booked, removed, undecidedTrips, failures, freshInLot } = input;
  const notStarted = input.notStarted ?? 0;
  if (!wholeAtLeast(planned, 1)) throw new RangeError('the plan’s sample size must be a whole number ≥ 1');
  if (!wholeAtLeast(c, 0) || c >= planned) throw new RangeError('the accept number must be a whole number below the sample size');
  for (const [name, v] of Object.entries({ booked, removed, undecidedTrips, failures, freshInLot, notStarted })) {
    if (!wholeAtLeast(v, 0)) throw new RangeError(`${name} must be a whole number ≥ 0`);
  }
  if (removed + undecidedTrips > booked) throw new RangeError('more devices out of the sample than booked');
  const valid = booked - removed - undecidedTrips;
  if (notStarted > valid) throw new RangeError('more devices waiting to start than still in the sample');
  if (failures > valid - notStarted) throw new RangeError('more failures than devices still in the sample');
  const planLtpd = demonstratedLtpd({ sampleSize: planned, acceptNumber: c, confidence });
  const ltpdNow = ltpdOf(valid - notStarted, c, confidence);
  const base = { valid, notStarted, planLtpd, ltpdNow, noFailureRoom: false };
  const none = (status: MakeUpStatus, explanation: string): MakeUpProposal => ({
    ...base,
    status,
    makeUpSize: 0,
    restoredSize: valid,
    restoredLtpd: null,
    explanation,
  });
  if (valid >= planned && notStarted > 0) {
    return none(
      'nothing-to-restore',
      `A make-up is booked: with the ${notStarted} devices of runs not started yet, ${valid} devices will be in the sample; the plan asks for ${planned}. Until they are stressed and read, the ${valid - notStarted} on test demonstrate ${ltpdNow === null ? 'no LTPD' : `an LTPD of ${pct(ltpdNow)}`}.`,
    );
  }
  if (valid >= planned) {
    return none(
      'nothing-to-restore',
      `${valid} devices are still in the sample; the plan asks for ${planned}, so its LTPD of ${pct(planLtpd)} stands without a make-up.`,
    );
  }
  if (failures > c) {
    return none(
      'failed-already',
      `${failures} ${failures === 1 ? 'failure exceeds' : 'failures exceed'} the accept number of ${c}: the sample has failed, and a make-up cannot restore it.`,
    );
  }
  const k = planned - valid;
  if (freshInLot < k) {
    return none(
      'too-few-fresh',
      `A make-up needs ${k} fresh devices from the lot; it holds ${freshInLot} never stressed. Register more devices of the lot, or record the smaller sample.`,
    );
  }
  const restoredLtpd = demonstratedLtpd({ sampleSize: planned, acceptNumber: c, confidence });
  const noFailureRoom = failures > 0 && failures === c;
  return {
    ...base,
    status: 'possible',
    makeUpSize: k,
    restoredSize: planned,
    restoredLtpd,
    noFailureRoom,
    explanation:
      `A make-up of ${k} fresh devices, judged with the ${valid} still in the sample, restores ${planned} devices ` +
      `at accept number ${c}: LTPD ${pct(restoredLtpd)} (now ${ltpdNow === null ? 'none' : pct(ltpdNow)}).` +
      (noFailureRoom
        ? ` The sample already has ${failures} ${failures === 1 ? 'failure' : 'failures'}: any failure among the make-up devices fails it.`
        : ''),
  };
}
