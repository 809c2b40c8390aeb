/**
 * The permission table drives the screens: the same change as tests/api/permissions.test.ts
 * (managers may book runs) makes the Schedule screen offer "Book a run" to a manager.
 */
import { screen } from '@testing-library/react-native';
import { ScheduleScreen } from '@/components/schedule/ScheduleScreen';
import { BOOKING_OVERRIDE, withPermission } from '../support/permission-override';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const manager = {
  id: '00000000-0000-4000-8000-000000000003',
  email: 'm@x',
  name: 'M',
  role: 'manager',
  notifyAlarms: true,
  notifyReadPoints: true,
};
const now = new Date().toISOString();

function renderScheduleAsManager() {
  setWidth(1440);
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: manager } },
    'GET /api/runs/timeline': { status: 200, body: { from: now, to: now, now, msPerClockH: 1000, rows: [] } },
    'GET /api/runs?open=1': { status: 200, body: { items: [] } },
    'GET /api/plans': { status: 200, body: { items: [] } },
  });
  return renderWithClient(<ScheduleScreen />);
}

test('as declared: a manager sees the schedule without a "Book a run" button', async () => {
  renderScheduleAsManager();
  expect(await screen.findByText('An engineer books runs; they appear here.')).toBeOnTheScreen();
  expect(screen.queryByText('Book a run')).not.toBeOnTheScreen();
});

test('with the table changed to let managers book, the button appears', async () => {
  await withPermission(BOOKING_OVERRIDE.action, BOOKING_OVERRIDE.roles, async () => {
    renderScheduleAsManager();
    expect(await screen.findByText('Book a run')).toBeOnTheScreen();
    expect(screen.getByText('Book a run to put a plan on a rig.')).toBeOnTheScreen();
  });
});
