import { jStat } from 'jstat';
import { MAKE_UP_RULE, proposeMakeUp, type MakeUpInput } from '../../shared/verdict/make-up';

const base: MakeUpInput = {
  planned: 77,
  acceptNumber: 0,
  confidence: 0.9,
  booked: 77,
  removed: 0,
  undecidedTrips: 0,
  failures: 0,
  freshInLot: 40,
};

describe('proposeMakeUp (make-up sample restoring the plan’s LTPD)', () => {
  test('77 devices, c 0: 10 lost and 3 tripped undecided leave 64; a make-up of 13 restores 2.95 %', () => {
    const p = proposeMakeUp({ ...base, removed: 10, undecidedTrips: 3 });
    expect(p.status).toBe('possible');
    expect(p.valid).toBe(64);
    // [pub: MIL-PRF-19500 LTPD sampling; binomial success-run, REFERENCE.md §3] n 77, c 0, 90 % → 2.95 %
    expect(p.planLtpd).toBeCloseTo(0.0295, 4);
    // [pub: binomial success-run, c 0: p = 1 − (1 − CL)^(1/n)] n 64 → 1 − 0.1^(1/64) = 3.534 %
    expect(p.ltpdNow).toBeCloseTo(1 - 0.1 ** (1 / 64), 6);
    expect(p.ltpdNow).toBeCloseTo(0.03534, 5);
    expect(p.makeUpSize).toBe(13);
    expect(p.restoredSize).toBe(77);
    expect(p.restoredLtpd).toBeCloseTo(0.0295, 4);
    expect(p.noFailureRoom).toBe(false);
    expect(p.explanation).toBe(
      'A make-up of 13 fresh devices, judged with the 64 still in the sample, restores 77 devices at accept number 0: LTPD 2.95 % (now 3.53 %).',
    );
  });

  test('n 100, c 1 with one failure and 5 lost: make-up of 5; the failure leaves no room (REFERENCE A1)', () => {
    const p = proposeMakeUp({ ...base, planned: 100, acceptNumber: 1, booked: 100, removed: 5, failures: 1, freshInLot: 5 });
    expect(p.status).toBe('possible');
    // [calc, REFERENCE.md A1] n 100, c 1, 90 %, exact → 3.8339 %
    expect(p.planLtpd * 100).toBeCloseTo(3.8339, 4);
    // [reference library: jstat beta.inv(CL; c + 1, n − c)] n 95, c 1
    expect(p.ltpdNow).toBeCloseTo(jStat.beta.inv(0.9, 2, 94), 10);
    expect(p.makeUpSize).toBe(5);
    expect(p.restoredLtpd! * 100).toBeCloseTo(3.8339, 4);
    expect(p.noFailureRoom).toBe(true);
    expect(p.explanation).toMatch(/The sample already has 1 failure: any failure among the make-up devices fails it\.$/);
  });

  test.each([
    // [calc, REFERENCE.md A1] n 100, 90 %, c 0/1/2/3 → 2.2763/3.8339/5.2345/6.5586 %
    [0, 2.2763],
    [1, 3.8339],
    [2, 5.2345],
    [3, 6.5586],
  ])('nothing to restore when all 100 devices remain (c %d → plan LTPD %f %%, REFERENCE A1)', (c, ltpdPct) => {
    const p = proposeMakeUp({ ...base, planned: 100, acceptNumber: c, booked: 100, failures: c });
    expect(p.status).toBe('nothing-to-restore');
    expect(p.makeUpSize).toBe(0);
    expect(p.planLtpd * 100).toBeCloseTo(ltpdPct, 4);
    expect(p.ltpdNow! * 100).toBeCloseTo(ltpdPct, 4);
  });

  test('a sample booked above the plan that lost a few still meets n: nothing to restore', () => {
    const p = proposeMakeUp({ ...base, booked: 80, removed: 3 });
    expect(p.status).toBe('nothing-to-restore');
    expect(p.valid).toBe(77);
  });

  test('a make-up already booked (not started) fills the sample, but the LTPD now counts only the devices on test', () => {
    const p = proposeMakeUp({ ...base, booked: 79, removed: 2, notStarted: 2 });
    expect(p.status).toBe('nothing-to-restore');
    expect(p.valid).toBe(77);
    // [pub: binomial success-run, c 0: p = 1 − (1 − CL)^(1/n)] 75 on test → 3.02 %
    expect(p.ltpdNow).toBeCloseTo(1 - 0.1 ** (1 / 75), 9);
    expect(p.explanation).toBe(
      'A make-up is booked: with the 2 devices of runs not started yet, 77 devices will be in the sample; the plan asks for 77. Until they are stressed and read, the 75 on test demonstrate an LTPD of 3.02 %.',
    );
  });

  test('failures beyond the accept number: the sample has failed, no make-up (common practice)', () => {
    const p = proposeMakeUp({ ...base, removed: 4, failures: 1 });
    expect(p.status).toBe('failed-already');
    expect(p.makeUpSize).toBe(0);
    expect(p.restoredLtpd).toBeNull();
    expect(p.explanation).toBe('1 failure exceeds the accept number of 0: the sample has failed, and a make-up cannot restore it.');
  });

  test('too few fresh devices in the lot: no make-up, and the count is named', () => {
    const p = proposeMakeUp({ ...base, removed: 13, freshInLot: 12 });
    expect(p.status).toBe('too-few-fresh');
    expect(p.explanation).toMatch(/^A make-up needs 13 fresh devices from the lot; it holds 12 never stressed\./);
  });

  test('every device lost: nothing is demonstrated now (c ≥ devices left)', () => {
    const p = proposeMakeUp({ ...base, removed: 77, freshInLot: 77 });
    expect(p.ltpdNow).toBeNull();
    expect(p.makeUpSize).toBe(77);
  });

  test('impossible inputs are refused', () => {
    expect(() => proposeMakeUp({ ...base, removed: 70, undecidedTrips: 10 })).toThrow('more devices out of the sample than booked');
    expect(() => proposeMakeUp({ ...base, acceptNumber: 77 })).toThrow(/accept number/);
    expect(() => proposeMakeUp({ ...base, removed: 1.5 })).toThrow('removed must be a whole number ≥ 0');
    expect(() => proposeMakeUp({ ...base, removed: 76, failures: 2 })).toThrow('more failures than devices still in the sample');
  });

  test('the rule is stated and marked as common practice', () => {
    expect(MAKE_UP_RULE).toMatch(/judged together with the devices still in the sample as one sample/);
    expect(MAKE_UP_RULE).toMatch(/\(common practice\)\.$/);
  });
});
