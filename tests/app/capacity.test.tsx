import { fireEvent, screen, waitFor } from '@testing-library/react-native';
import { CapacityScreen } from '@/components/capacity/CapacityScreen';
import { capacitySeries, compact, delayWords } from '@/components/capacity/capacity-model';
import type { ReplanList, ReplanProposal, Utilisation } from '@/shared/schemas/replan';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));
// jest runs no dynamic import(): the chart gets a stand-in that shows the series it is given.
jest.mock('@/components/charts/LazyCharts', () => {
  const { Text } = require('react-native');
  const { capacitySeries: series } = require('@/components/capacity/capacity-model');
  return {
    UtilisationChart: ({ data, rig }: { data: Utilisation; rig: string | null }) => (
      <Text testID="chart-data">{JSON.stringify(series(data, rig))}</Text>
    ),
  };
});

const user = (role: string) => ({
  id: '00000000-0000-4000-8000-00000000000' + (role === 'manager' ? '1' : '2'),
  email: `${role}@harrowgate.example`,
  name: `Test ${role}`,
  role,
  active: true,
  notifyAlarms: false,
  notifyReadPoints: false,
  lastSignInAt: null,
  createdAt: '2026-01-01T00:00:00Z',
});

const proposal = (id: string, kind: 'move' | 'in-place', toRigCode: string, delayH: number): ReplanProposal => ({
  id,
  runId: '11111111-1111-4111-8111-111111111111',
  runCode: 'HTRB-2611-A',
  kind,
  state: 'open',
  reason: 'Oven OV-01 went offline (2026-12-04 23:10 UTC)',
  fromRigCode: 'OV-01',
  toRigCode,
  fromStart: '2026-12-10T08:00:00Z',
  fromEnd: '2026-12-14T08:00:00Z',
  startAt: '2026-12-10T08:00:00Z',
  endAt: '2026-12-14T08:00:00Z',
  dueAt: null,
  delayBasis: 'booked-finish',
  delayH,
  createdAt: '2026-12-04T23:10:00Z',
  decidedBy: null,
  decidedAt: null,
});

const REPLANS: ReplanList = {
  items: [
    proposal('aaaaaaaa-aaaa-4aaa-8aaa-aaaaaaaaaaaa', 'move', 'OV-02', 0),
    proposal('bbbbbbbb-bbbb-4bbb-8bbb-bbbbbbbbbbbb', 'in-place', 'OV-01', 26.5),
  ],
  held: [
    {
      runId: 'r2',
      runCode: 'HTRB-2612-C',
      rigCode: 'OV-01',
      state: 'stressing',
      stressHours: 120,
      note: 'OV-01 is offline: the run waits in place with its devices.',
    },
  ],
};

const W1 = '2026-11-23T00:00:00.000Z';
const W2 = '2026-11-30T00:00:00.000Z';
const UTIL: Utilisation = {
  weeks: [W1, W2],
  rigs: ['OV-01', 'OV-02'],
  rows: [
    { rigCode: 'OV-01', weekStart: W1, bookedSh: 400, stressedSh: 318, idleSh: 22, lostSh: 60 },
    { rigCode: 'OV-02', weekStart: W1, bookedSh: 100, stressedSh: 80, idleSh: 20, lostSh: 0 },
    { rigCode: 'OV-01', weekStart: W2, bookedSh: 0, stressedSh: 0, idleSh: 0, lostSh: 0 },
    { rigCode: 'OV-02', weekStart: W2, bookedSh: 50, stressedSh: 0, idleSh: 50, lostSh: 0 },
  ],
  turnaround: {
    medianH: 52,
    lots: [
      { lotCode: 'HG2611-A', requestedAt: W1, signedAt: W2, hours: 52 },
      { lotCode: 'HG2612-C', requestedAt: W1, signedAt: W2, hours: 52 },
    ],
  },
  definitions: { booked: 'Booked: sample size × hours of the window.', idle: 'Idle: booked − stressed − lost.' },
};

beforeEach(() => setWidth(1440));

describe('capacity model', () => {
  it('sums the rigs per week, or shows one rig', () => {
    expect(capacitySeries(UTIL, null)).toEqual({ weeks: [W1, W2], booked: [500, 50], stressed: [398, 0], idle: [42, 50], lost: [60, 0] });
    expect(capacitySeries(UTIL, 'OV-02').booked).toEqual([100, 50]);
  });

  it('writes axis numbers short', () => {
    expect([compact(950), compact(12_500), compact(3_240_000), compact(0)]).toEqual(['950', '12.5k', '3.2M', '0']);
  });

  it('words the delay against its basis', () => {
    expect(delayWords({ delayH: 0, delayBasis: 'booked-finish' })).toBe('On time against its booked finish');
    expect(delayWords({ delayH: 26.5, delayBasis: 'due-date' })).toBe('27 h late against its due date');
    expect(delayWords({ delayH: -1.25, delayBasis: 'booked-finish' })).toBe('1.25 h early against its booked finish');
  });
});

test('a manager sees the options with their delay and accepts one with a click', async () => {
  const fetch = mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('manager') } },
    'GET /api/replan?state=open': { status: 200, body: REPLANS },
    'GET /api/utilisation?weeks=8': { status: 200, body: UTIL },
    'POST /api/replan/aaaaaaaa-aaaa-4aaa-8aaa-aaaaaaaaaaaa/accept': { status: 200, body: { ...REPLANS.items[0], state: 'accepted' } },
  });
  renderWithClient(<CapacityScreen />);
  expect(await screen.findByText('Move to OV-02')).toBeOnTheScreen();
  expect(screen.getByText('Stay on OV-01')).toBeOnTheScreen();
  expect(screen.getByText(/On time against its booked finish/)).toBeOnTheScreen();
  expect(screen.getByText(/27 h late against its booked finish/)).toBeOnTheScreen();
  expect(screen.getByText('HTRB-2612-C waits on OV-01')).toBeOnTheScreen();
  expect(await screen.findByText('Median request-to-verdict: 52.0 h over 2 lots.')).toBeOnTheScreen();
  expect(screen.getByTestId('chart-data')).toHaveTextContent(JSON.stringify(capacitySeries(UTIL, null)));
  fireEvent.press(await screen.findByRole('button', { name: 'Accept: Move to OV-02 for HTRB-2611-A' }));
  await waitFor(() =>
    expect(
      fetch.mock.calls.some(([url, init]) => init?.method === 'POST' && url === '/api/replan/aaaaaaaa-aaaa-4aaa-8aaa-aaaaaaaaaaaa/accept'),
    ).toBe(true),
  );
});

test('a refused accept shows the reason the server gives', async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('engineer') } },
    'GET /api/replan?state=open': { status: 200, body: REPLANS },
    'GET /api/utilisation?weeks=8': { status: 200, body: UTIL },
    'POST /api/replan/aaaaaaaa-aaaa-4aaa-8aaa-aaaaaaaaaaaa/accept': {
      status: 409,
      body: {
        error: {
          code: 'conflict',
          message: 'This proposal for HTRB-2611-A was replaced by a newer one; nothing was changed. Reload the re-plan list.',
        },
      },
    },
  });
  renderWithClient(<CapacityScreen />);
  fireEvent.press(await screen.findByRole('button', { name: 'Accept: Move to OV-02 for HTRB-2611-A' }));
  expect(
    await screen.findByText('This proposal for HTRB-2611-A was replaced by a newer one; nothing was changed. Reload the re-plan list.'),
  ).toBeOnTheScreen();
});

test('an admin sees the proposals without an Accept button', async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: user('admin') } },
    'GET /api/replan?state=open': { status: 200, body: REPLANS },
    'GET /api/utilisation?weeks=8': { status: 200, body: UTIL },
  });
  renderWithClient(<CapacityScreen />);
  expect(await screen.findByText('Move to OV-02')).toBeOnTheScreen();
  expect(screen.queryByRole('button', { name: /^Accept/ })).toBeNull();
});
