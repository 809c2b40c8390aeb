/** The broker's sign-in throttle on a fake clock (broker/sign-in-throttle.ts). Limits are this project's choice. */
import { SignInThrottle } from '../../broker/sign-in-throttle';

function make(over: ConstructorParameters<typeof SignInThrottle>[0] = {}) {
  let now = 1_000_000;
  const th = new SignInThrottle({
    freeFailuresPerName: 3,
    freeFailuresPerAddress: 10,
    baseLockMs: 1000,
    maxLockMs: 8000,
    forgetAfterMs: 60_000,
    now: () => now,
    ...over,
  });
  return { th, advance: (ms: number) => (now += ms) };
}

const fail = (th: SignInThrottle, user: string, addr = '10.0.0.1') => {
  const v = th.begin(user, 'wrong', addr);
  if (v.ok) v.done(false);
  return v.ok;
};

test('a name is locked after its free failures, for a delay that doubles up to the cap', () => {
  const { th, advance } = make();
  expect([fail(th, 'rig-a'), fail(th, 'rig-a'), fail(th, 'rig-a')]).toEqual([true, true, true]);
  const locked = th.begin('rig-a', 'wrong', '10.0.0.1');
  expect(locked).toEqual({ ok: false, retryAfterMs: 1000, key: 'name' });
  const waits: number[] = [];
  for (let k = 0; k < 6; k++) {
    const v = th.begin('rig-a', 'x', '10.0.0.2');
    expect(v.ok).toBe(false);
    const wait = v.ok ? 0 : v.retryAfterMs;
    advance(wait);
    waits.push(wait);
    expect(fail(th, 'rig-a', '10.0.0.2')).toBe(true); // one try after each lock
  }
  expect(waits).toEqual([1000, 2000, 4000, 8000, 8000, 8000]);
});

test('one check of a name at a time: a burst cannot slip past the allowance', () => {
  const { th } = make();
  const verdicts = Array.from({ length: 10 }, () => th.begin('rig-b', 'wrong', '10.0.0.1'));
  expect(verdicts.filter((v) => v.ok)).toHaveLength(1);
  // With more checks allowed side by side, attempts in flight still count against the allowance.
  const { th: wide } = make({ checksInFlightPerName: 10 });
  const burst = Array.from({ length: 10 }, () => wide.begin('rig-b', 'wrong', '10.0.0.1'));
  expect(burst.filter((v) => v.ok)).toHaveLength(3);
});

test('many rigs behind one address sign in side by side until that address fails', () => {
  const { th } = make();
  const firsts = Array.from({ length: 8 }, (_, k) => th.begin(`rig-n${k}`, 'right', '10.0.0.9'));
  expect(firsts.every((v) => v.ok)).toBe(true);
  for (const v of firsts) if (v.ok) v.done(true);
  fail(th, 'rig-typo', '10.0.0.9');
  const after = Array.from({ length: 4 }, (_, k) => th.begin(`rig-m${k}`, 'right', '10.0.0.9'));
  expect(after.map((v) => v.ok)).toEqual([true, true, false, false]);
});

test('credentials that succeeded before pass a locked name; others on that name do not', () => {
  const { th } = make();
  const good = th.begin('rig-c', 'right', '10.0.0.1');
  expect(good.ok).toBe(true);
  if (good.ok) good.done(true);
  for (let k = 0; k < 3; k++) fail(th, 'rig-c', '10.9.9.9');
  expect(th.begin('rig-c', 'other', '10.0.0.1').ok).toBe(false);
  expect(th.begin('rig-c', 'right', '10.0.0.1').ok).toBe(true);
});

test('an address is locked across names; other addresses and a check that could not be made (database down) are not counted', () => {
  const { th } = make();
  for (let k = 0; k < 10; k++) fail(th, `rig-${k}`, '10.0.0.66');
  expect(th.begin('rig-new', 'x', '10.0.0.66')).toMatchObject({ ok: false, key: 'address' });
  expect(th.begin('rig-new', 'x', '10.0.0.67').ok).toBe(true);
  const { th: th2 } = make();
  for (let k = 0; k < 20; k++) {
    const v = th2.begin('rig-d', 'x', '10.0.0.1');
    if (v.ok) v.done(null);
  }
  expect(th2.begin('rig-d', 'x', '10.0.0.1').ok).toBe(true);
});

test('a quiet key is forgotten; the tracked keys stay bounded', () => {
  const { th, advance } = make({ maxEntries: 50 });
  for (let k = 0; k < 3; k++) fail(th, 'rig-e');
  expect(th.begin('rig-e', 'x', '10.0.0.2').ok).toBe(false);
  advance(61_000);
  expect(th.begin('rig-e', 'x', '10.0.0.2').ok).toBe(true);
  for (let k = 0; k < 500; k++) fail(th, `spray-${k}`, `10.1.${k >> 8}.${k & 255}`);
  expect(th.size).toBeLessThanOrEqual(51);
});

test('a name is checked once at a time; the next check may start when one ends', () => {
  const { th } = make({ freeFailuresPerName: 5 });
  const first = th.begin('rig-f', 'wrong', '10.0.0.1');
  expect(first.ok).toBe(true);
  expect(th.begin('rig-f', 'wrong', '10.0.0.2')).toMatchObject({ ok: false, key: 'name' });
  if (first.ok) first.done(false);
  expect(th.begin('rig-f', 'wrong', '10.0.0.2').ok).toBe(true);
});

test('a rig passing its own locked name with known credentials does not lift the lock for the guesser', () => {
  const { th } = make();
  const good = th.begin('rig-g', 'right', '10.0.0.1');
  if (good.ok) good.done(true);
  for (let k = 0; k < 3; k++) fail(th, 'rig-g', '10.9.9.9');
  const again = th.begin('rig-g', 'right', '10.0.0.1');
  expect(again.ok).toBe(true);
  if (again.ok) again.done(true);
  expect(th.begin('rig-g', 'guess', '10.9.9.9')).toMatchObject({ ok: false, key: 'name' });
});

test('forty rigs behind one address reconnecting at once are all checked (regression: the 21st was refused)', () => {
  // The bench's 40 rigs on 127.0.0.1 after a start: more than the address's free failures, none failed.
  const { th } = make({ freeFailuresPerAddress: 20 });
  const all = Array.from({ length: 40 }, (_, k) => th.begin(`rig-r${k}`, 'right', '127.0.0.1'));
  expect(all.filter((v) => v.ok)).toHaveLength(40);
  for (const v of all) if (v.ok) v.done(true);
  // Once the address has failed, its checks in flight count again: a burst is held to the allowance.
  fail(th, 'rig-typo', '127.0.0.1');
  const burst = Array.from({ length: 40 }, (_, k) => th.begin(`rig-s${k}`, 'wrong', '127.0.0.1'));
  expect(burst.filter((v) => v.ok).length).toBeLessThanOrEqual(2);
});
