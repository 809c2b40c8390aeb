/**
 * The records rules (shared/domain/records.ts): which writes of a reading are deviations and which
 * need a reason. Emberlot's own policy following common practice for evidence records (a change
 * keeps the old value and says why); the cases below are the rule's own table, not a published one.
 */
import { needsReason, recordDeviations, timeZeroLocked } from '../../shared/domain/records';

const booked = { state: 'booked', startedAt: null };
const stressing = { state: 'stressing', startedAt: '2026-11-01T08:00:00Z' };
const finished = { state: 'finished', startedAt: '2026-09-01T08:00:00Z' };
const w = (readPointH: number, replaces: boolean, failedBefore: number | null = null, failedAfter: number | null = null) => ({
  readPointH,
  replaces,
  failedBefore,
  failedAfter,
});

describe('records rules (common practice; Emberlot policy)', () => {
  it.each([
    ['time zero before Start, first entry', booked, w(0, false), []],
    ['time zero before Start, corrected', booked, w(0, true), []],
    ['time zero after Start, first entry', stressing, w(0, false), ['time-zero-after-start']],
    ['time zero after Start, corrected', stressing, w(0, true), ['time-zero-after-start']],
    ['168 h while stressing, corrected', stressing, w(168, true), []],
    ['1000 h of a finished run, first entry (the final read point is measured after the end)', finished, w(1000, false), []],
    ['1000 h of a finished run, corrected', finished, w(1000, true), ['finished-run-changed']],
    ['failure withdrawn (failed at 168 h → passes)', stressing, w(168, true, 168, null), ['failure-withdrawn']],
    ['failure moved later (168 h → 500 h)', stressing, w(168, true, 168, 500), ['failure-withdrawn']],
    ['failure moved earlier (500 h → 168 h) is no withdrawal', stressing, w(168, true, 500, 168), []],
    ['a new failure is no withdrawal', stressing, w(168, false, null, 168), []],
  ] as const)('%s', (_name, run, write, expected) => {
    expect(recordDeviations(run, write)).toEqual(expected);
  });

  it('a reason is needed for any replaced value and any deviation, not for a plain first entry', () => {
    expect(needsReason(false, [])).toBe(false);
    expect(needsReason(true, [])).toBe(true);
    expect(needsReason(false, ['time-zero-after-start'])).toBe(true);
  });

  it('time zero is locked from Start on', () => {
    expect(timeZeroLocked(booked)).toBe(false);
    expect(timeZeroLocked({ state: 'loading', startedAt: null })).toBe(false);
    expect(timeZeroLocked(stressing)).toBe(true);
  });
});
