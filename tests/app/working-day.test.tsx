/** Pure parts of the working-day fixes (issue #23 items 5 and 10). */
import { acknowledgedText } from '@/components/alarms/AlarmsScreen';
import { errorSummaryLines } from '@/components/devices/DeviceTypeForm';
import { upcomingOnRig } from '@/components/floor/RigRuns';
import { badgeText, navLabel } from '@/components/shell/destinations';
import type { Run } from '@/shared/schemas/runs';

jest.mock('expo-router', () => require('./support/expo-router'));

test('the Alarms item’s accessible name carries the open count', () => {
  expect(navLabel('Alarms', 3)).toBe('Alarms, 3 open');
  expect(navLabel('Alarms', 0)).toBe('Alarms');
  expect(navLabel('Alarms', undefined)).toBe('Alarms');
  expect([badgeText(7), badgeText(99), badgeText(140)]).toEqual(['7', '99', '99+']);
});

test('upcoming bookings on a rig: booked only, soonest first, not the run on the rig', () => {
  const run = (id: string, state: Run['state'], scheduledStart: string | null) => ({ id, code: id, state, scheduledStart });
  const runs = [
    run('C', 'booked', '2026-12-06T08:00:00Z'),
    run('A', 'stressing', null),
    run('B', 'booked', '2026-12-05T08:00:00Z'),
    run('D', 'finished', null),
  ];
  expect(upcomingOnRig(runs, 'A').map((r) => r.id)).toEqual(['B', 'C']);
  expect(upcomingOnRig(runs, 'B').map((r) => r.id)).toEqual(['C']);
});

test('the device form’s error summary names fields in form order', () => {
  expect(errorSummaryLines({ thetaJaCPerW: 'Required', partNumber: 'Enter a part number', polarity: 'Choose the polarity' })).toEqual([
    'Part number: Enter a part number',
    'Polarity: Choose the polarity',
    'θja (°C/W): Required',
  ]);
  expect(errorSummaryLines({})).toEqual([]);
});

test('the acknowledgement confirmation says who and when', () => {
  const a = {
    title: 'Socket 5 on OV-03 tripped: runaway',
    acknowledgedBy: { id: 'u', name: 'Priya Castell' },
    acknowledgedAt: '2026-12-04T10:05:00Z',
  };
  expect(acknowledgedText(a)).toMatch(/^Acknowledged by Priya Castell on 2026-12-04 \d\d:05: Socket 5 on OV-03 tripped: runaway\.$/);
});
