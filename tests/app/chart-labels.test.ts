/**
 * The rig chart's time words (components/floor/chart-labels.ts): a year's chart (hourly tier,
 * buckets of about a day) names days, not clock times; the caption's bucket reads in s, min or h.
 * Expected strings follow the en-GB formats of Intl (ECMA-402) for the options used.
 */
import { bucketText, timeLabel } from '@/components/floor/chart-labels';

const DAY = 86_400_000;

test('bucket lengths in the caption', () => {
  expect(bucketText(12_000)).toBe('12 s');
  expect(bucketText(119_000)).toBe('119 s');
  expect(bucketText(120_000)).toBe('2 min');
  expect(bucketText(576_000)).toBe('10 min'); // 2 days at 300 points
  expect(bucketText(8_640_000)).toBe('2.4 h'); // 30 days at 300 points
  expect(bucketText((365 * DAY) / 300)).toBe('29.2 h'); // a year at 300 points
});

test('times up to 2 days, dates beyond', () => {
  const at = new Date(2026, 11, 4, 9, 5).getTime(); // local time, as the screen shows it
  expect(timeLabel(at, 3_600_000)).toBe('09:05');
  expect(timeLabel(at, 2 * DAY)).toBe('09:05');
  expect(timeLabel(at, 2 * DAY + 1)).toBe('2026-12-04');
  expect(timeLabel(at, 365 * DAY)).toBe('2026-12-04');
});
