import { screen } from '@testing-library/react-native';
import { RunDetailScreen } from '@/components/runs/RunDetailScreen';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

const now = Date.now();
const iso = (d: number) => new Date(now + d).toISOString();
const operator = {
  id: '00000000-0000-4000-8000-000000000002',
  email: 'o@x',
  name: 'O',
  role: 'operator',
  notifyAlarms: true,
  notifyReadPoints: true,
};
const run = {
  id: '00000000-0000-4000-8000-0000000000bb',
  code: 'IOL-2605-J',
  state: 'stressing',
  stateLabel: 'Under stress',
  plan: {
    id: 'p',
    planKey: 'k',
    name: 'IOL ΔTj 100 °C',
    version: 1,
    kind: 'iol',
    chamberC: 25,
    humidityPct: null,
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    biasV: 10,
    checkStatus: 'ok',
  },
  rig: { id: 'r', code: 'CY-07', name: 'Cycling bench 7', socketCount: 16, online: true },
  lots: [{ id: 'l', code: 'HG2605-H' }],
  partNumber: 'HPD-S230',
  sampleSize: 2,
  sample: null,
  loadedCount: 2,
  trippedCount: 0,
  scheduledStart: iso(0),
  scheduledEnd: iso(100000),
  startedAt: iso(0),
  finishedAt: null,
  stateChangedAt: iso(0),
  stressHours: 120.4,
  targetH: 1000,
  cycles: { done: 1806, target: 15000, nextReadPointCycles: 2520, deltaTjC: 100, band: { lowC: 100, highC: 125 }, onMin: 2, offMin: 2 },
  nextReadPointH: 168,
  lastReadPointH: 0,
  heatingSince: iso(0),
  ambientReachedAt: iso(0),
  biasRemovedAt: null,
  abortReason: null,
  override: null,
  allowedActions: ['pause', 'abort'],
  rowVersion: 3,
  createdAt: iso(0),
  sockets: [
    {
      socket: 0,
      serial: 'H0033',
      lotCode: 'HG2605-H',
      accruedHours: 120.4,
      tripped: false,
      tripReason: null,
      failedAtH: null,
      cycles: { done: 1806, missed: 2, lastDTjLowC: 103.04, lastDTjHighC: 103.04 },
    },
    {
      socket: 1,
      serial: 'H0034',
      lotCode: 'HG2605-H',
      accruedHours: 120.4,
      tripped: false,
      tripReason: null,
      failedAtH: null,
      cycles: { done: 1790, missed: 0, lastDTjLowC: 101.2, lastDTjHighC: 104.5 },
    },
  ],
  audit: [],
  socketsTaken: [],
};

test('a cycling run shows cycles against the target, the ΔTj band and each socket’s cycles and last swing', async () => {
  setWidth(1440);
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: operator } },
    [`GET /api/runs/${run.id}`]: { status: 200, body: run },
  });
  renderWithClient(<RunDetailScreen id={run.id} />);
  expect(await screen.findByText('IOL-2605-J')).toBeOnTheScreen();
  expect(screen.getByTestId('run-cycles')).toHaveTextContent('1,806 / 15,000');
  expect(screen.getByText('2,520 cycles')).toBeOnTheScreen();
  // The last swing over all sockets: the smallest low to the largest high.
  expect(screen.getByTestId('run-last-swing')).toHaveTextContent('101.2–104.5 K');
  expect(screen.getByText(/A cycle counts when its junction swing is 100 K to 125 K/)).toBeOnTheScreen();
  expect(screen.getByText('1,806 · ΔTj 103 K (2 not credited)')).toBeOnTheScreen();
  expect(screen.getByText('1,790 · ΔTj 101.2–104.5 K')).toBeOnTheScreen();
  // Chamber hours stay, but the hour read point and target do not compete with the cycle count.
  expect(screen.getByText('Chamber hours')).toBeOnTheScreen();
  expect(screen.queryByText('1000 h')).toBeNull();
});
