/**
 * The rigs admin's "Telemetry intake" card on a standby API process (EMBERLOT_WORKERS=elect): the
 * live figures are the leader's, relayed (server/cluster/event-relay.ts), and the card says so with
 * their age; on the process running the intake itself no such line shows.
 */
import { screen } from '@testing-library/react-native';
import { RigsScreen } from '@/components/rigs/RigsScreen';
import type { TelemetryStats } from '@/shared/schemas/rigs';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));
jest.setTimeout(60_000);

/** The rigs screen loads its lazy parts first: on a busy machine that takes longer than findBy's 1 s. */
const LOADED = { timeout: 30_000 };

const admin = {
  id: '00000000-0000-4000-8000-000000000001',
  email: 'mara.quint@harrowgate.example',
  name: 'Mara Quint',
  role: 'admin',
  active: true,
  notifyAlarms: true,
  notifyReadPoints: true,
  lastSignInAt: null,
  createdAt: '2025-10-01T00:00:00Z',
};

const live = {
  mqttConnected: true,
  databaseOk: true,
  buffered: 12,
  bufferLimit: 50_000,
  batches: 340,
  lastBatchMs: 18,
  pendingCommands: 0,
};

function stats(liveSource: TelemetryStats['liveSource']): TelemetryStats {
  return { counters: { ingest_messages: 340 }, live, liveSource };
}

beforeEach(() => setWidth(1440));

test("a standby's card shows the leader's figures and how old they are", async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/rigs': { status: 200, body: { items: [] } },
    'GET /api/telemetry/stats': {
      status: 200,
      body: stats({ kind: 'leader', processId: 'api-a:4102:9f1c', measuredAt: '2026-12-05T06:40:00Z', ageSeconds: 3.4 }),
    },
  });
  renderWithClient(<RigsScreen />);
  expect(await screen.findByText('12 waiting of 50000', {}, LOADED)).toBeOnTheScreen();
  expect(screen.getByTestId('ingest-live-source')).toHaveTextContent('As reported by the server process that runs the intake, 3 s ago.');
});

test('the process running the intake shows its own figures without that line', async () => {
  mockFetch({
    'GET /api/auth/me': { status: 200, body: { user: admin } },
    'GET /api/rigs': { status: 200, body: { items: [] } },
    'GET /api/telemetry/stats': {
      status: 200,
      body: stats({ kind: 'own', processId: null, measuredAt: '2026-12-05T06:40:00Z', ageSeconds: 0 }),
    },
  });
  renderWithClient(<RigsScreen />);
  expect(await screen.findByText('12 waiting of 50000', {}, LOADED)).toBeOnTheScreen();
  expect(screen.queryByTestId('ingest-live-source')).toBeNull();
});
