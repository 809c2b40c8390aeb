/**
 * Which level an engineer is told at (the product owner's rule for issue "See the verdict coming"):
 * their own, off, or the lab's while read-point notices are on. No published source: product rules.
 */
import { effectiveAlertLevel } from '../../shared/forecast/rules';

test.each([
  ['own level, notices on', { set: true as const, below: 0.4 }, 0.5, true, 0.4],
  ['own level, notices off (an own level is a choice of its own)', { set: true as const, below: 0.1 }, 0.5, false, 0.1],
  ['turned off', { set: true as const, below: null }, 0.5, true, null],
  ['no own level, notices on: the lab’s', { set: false as const }, 0.6, true, 0.6],
  ['no own level, notices off: not told', { set: false as const }, 0.6, false, null],
])('%s', (_name, own, lab, notices, expected) => {
  expect(effectiveAlertLevel(own, lab, notices)).toBe(expected);
});
