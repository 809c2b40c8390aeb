/**
 * Run, alarm and floor events between API processes (server/cluster/event-relay.ts) over real
 * PostgreSQL NOTIFY/LISTEN: two contexts on one database stand for two processes, each with its own
 * event bus and relay. An event emitted in one reaches the other's bus once, is never echoed back,
 * and telemetry reaches the other's live floor as rig ids.
 */
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import { ALARM_EVENT, RUN_EVENT, TELEMETRY_LANDED, type AlarmEvent, type RunEvent, type TelemetryLanded } from '../../server/events';
import { startEventRelay } from '../../server/cluster/event-relay';
import { createTestDb, type TestDb } from '../support/db';

let db: TestDb;
let a: AppContext;
let b: AppContext;
const stops: Array<() => Promise<void>> = [];

const runEvent = (runId: string, rigId: string): RunEvent => ({
  type: 'state-changed',
  runId,
  runCode: 'HTRB-2611-A',
  rigId,
  rigCode: 'OV-07',
  at: new Date().toISOString(),
  from: 'loading',
  to: 'heating',
  actor: 'operator@test.example',
  reason: null,
});

const alarmEvent = (id: string, message: string): AlarmEvent => ({
  change: 'raised',
  alarm: {
    id,
    kind: 'runaway-trip',
    severity: 'critical',
    rigId: 'rig-2',
    rigCode: 'OV-08',
    runId: null,
    runCode: null,
    socketIndex: 3,
    title: 'Socket 3 on OV-08 tripped',
    message,
    action: 'Check the rig.',
    details: { tjC: 141.2 },
    raisedAt: new Date().toISOString(),
    lastSeenAt: new Date().toISOString(),
    occurrences: 1,
    acknowledgedAt: null,
    acknowledgedBy: null,
    ackNote: null,
    clearedAt: null,
    open: true,
    active: true,
  },
});

const until = async (cond: () => boolean, label: string, ms = 15_000) => {
  const deadline = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await new Promise((r) => setTimeout(r, 20));
  }
};

beforeAll(async () => {
  db = await createTestDb();
  const config = { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config };
  a = createContext(db.ds, config);
  b = createContext(db.ds, config);
  stops.push(
    startEventRelay(a, 'process-a', 20, () => undefined),
    startEventRelay(b, 'process-b', 20, () => undefined),
  );
  // Both LISTEN connections open: a fixed pause lost the first event on a loaded machine.
  const listening = async () =>
    Number(
      (
        await db.ds.query(
          `SELECT count(*)::int AS n FROM pg_stat_activity
            WHERE application_name = 'emberlot-event-relay' AND datname = current_database()
              AND state = 'idle' AND query ILIKE 'LISTEN%'`,
        )
      )[0].n,
    );
  const deadline = Date.now() + 20_000;
  while ((await listening()) < 2) {
    if (Date.now() > deadline) throw new Error('the two relay LISTEN connections did not open');
    await new Promise((r) => setTimeout(r, 50));
  }
});

afterAll(async () => {
  for (const s of stops) await s();
  await a?.close();
  await b?.close();
  await db?.drop();
});

test('a run event from one process reaches the other once, equal, and is not echoed back', async () => {
  const seenA: RunEvent[] = [];
  const seenB: RunEvent[] = [];
  a.events.on(RUN_EVENT, (e) => seenA.push(e));
  b.events.on(RUN_EVENT, (e) => seenB.push(e));
  const e = runEvent('11111111-1111-4111-8111-111111111111', 'rig-1');
  a.events.emit(RUN_EVENT, e);
  await until(() => seenB.length === 1, 'the run event in B');
  expect(seenB[0]).toEqual(e);
  await new Promise((r) => setTimeout(r, 300)); // several relay ticks: nothing more may arrive
  expect(seenA).toHaveLength(1); // its own emit only
  expect(seenB).toHaveLength(1);
});

test('an alarm raised in the standby reaches the leader (notifications run there)', async () => {
  const seenA: AlarmEvent[] = [];
  a.events.on(ALARM_EVENT, (e) => seenA.push(e));
  const e = alarmEvent('alarm-1', 'Tj 141.2 °C, peers 117 °C — ΔTj rising');
  b.events.emit(ALARM_EVENT, e);
  await until(() => seenA.length === 1, 'the alarm in A');
  expect(seenA[0]).toEqual(e);
});

test("telemetry marks the rig dirty in the other process's floor stream; a payload too large for NOTIFY goes as its rig id", async () => {
  const dirtyB = jest.spyOn(b.services.floorStream, 'markRigDirty');
  a.events.emit(TELEMETRY_LANDED, { rigId: 'rig-9' } as TelemetryLanded);
  await until(() => dirtyB.mock.calls.some(([id]) => id === 'rig-9'), 'rig-9 marked dirty in B');

  const seenB: AlarmEvent[] = [];
  b.events.on(ALARM_EVENT, (e) => seenB.push(e));
  a.events.emit(ALARM_EVENT, alarmEvent('alarm-big', 'x'.repeat(9_000)));
  await until(() => dirtyB.mock.calls.some(([id]) => id === 'rig-2'), 'rig-2 marked dirty in B');
  expect(seenB).toHaveLength(0);
  dirtyB.mockRestore();
});
