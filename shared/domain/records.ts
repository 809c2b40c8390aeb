/**
 * Append-only measurement records (issue #21): when changing a stored reading needs a reason, and
 * when the change is a deviation on the lot that only an engineer may make. Declared once; the
 * measurements service, the screens and the tests import these. Emberlot's own policy, following
 * common practice for records kept as evidence (a change keeps the old value, says why, who and when).
 */
import { DEVIATION_REASON_MIN } from '../evidence';

/** A correction's reason needs at least this many characters (the same bar as a booking deviation). */
export const CORRECTION_REASON_MIN = DEVIATION_REASON_MIN;

/** What makes a change to the readings a deviation on the lot (needs the engineer's permission). */
export const RECORD_DEVIATION_KINDS = ['time-zero-after-start', 'finished-run-changed', 'failure-withdrawn'] as const;
export type RecordDeviationKind = (typeof RECORD_DEVIATION_KINDS)[number];

export const RECORD_DEVIATION_LABEL: Record<RecordDeviationKind, string> = {
  'time-zero-after-start': 'Time zero entered after stress started',
  'finished-run-changed': 'Reading changed after the run finished',
  'failure-withdrawn': 'A failing device no longer counts as failed',
};

/** The run's state as these rules read it. */
export interface RecordRunState {
  state: string;
  /** When stress started (the run's Start); null before. */
  startedAt: Date | string | null;
}

/** Time zero is locked once stress has started: a later entry is a deviation. */
export const timeZeroLocked = (run: RecordRunState): boolean => run.startedAt !== null;

/**
 * The deviations one write of a reading would make. `replaces`: a stored value would change.
 * `failedBefore` / `failedAfter`: the device's first failed read point before and after the write.
 */
export function recordDeviations(
  run: RecordRunState,
  w: { readPointH: number; replaces: boolean; failedBefore: number | null; failedAfter: number | null },
): RecordDeviationKind[] {
  const out: RecordDeviationKind[] = [];
  if (w.readPointH === 0 && timeZeroLocked(run)) out.push('time-zero-after-start');
  if (w.replaces && run.state === 'finished') out.push('finished-run-changed');
  if (w.failedBefore !== null && (w.failedAfter === null || w.failedAfter > w.failedBefore)) out.push('failure-withdrawn');
  return out;
}

/** Whether a write needs a written reason: any change of a stored value, and every deviation. */
export const needsReason = (replaces: boolean, deviations: readonly RecordDeviationKind[]): boolean => replaces || deviations.length > 0;
