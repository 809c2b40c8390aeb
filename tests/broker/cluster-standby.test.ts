/**
 * What a standby API process (EMBERLOT_WORKERS=elect, server/cluster/) answers for the leader: the
 * whole cluster layout — a private Redis, two broker processes sharing through it, two API processes
 * electing a leader (A leads, B stands by), real PostgreSQL, mqtt.js rigs.
 *  - /api/telemetry/stats on the standby carries the leader's live ingest figures, relayed over
 *    PostgreSQL NOTIFY (server/cluster/event-relay.ts), with their source and age;
 *  - a revocation made through the standby disconnects the rig at once, here a rig connected to
 *    broker B (server/modules/telemetry/one-shot-revoke.ts; before, only the leader's link sent it).
 * Redis port: EMBERLOT_TEST_REDIS_PORT + 3 when set, else a free ephemeral port.
 */
import bcrypt from 'bcryptjs';
import type { MqttClient } from 'mqtt';
import { UserEntity } from '../../server/db/entities';
import type { TelemetryStats } from '../../shared/schemas/rigs';
import { topics } from '../../shared/mqtt';
import { createTestDb, insertTestRig, type TestDb } from '../support/db';
import { apiClient, freePort, READY, spawnTs, START_TIMEOUT_MS, stopAllProcesses, type ApiClient } from '../support/processes';
import { startClusterStack, type ClusterStack } from '../faults/cluster';
import { connectClient, waitClosed } from './mqtt-test-helpers';

jest.setTimeout(150_000);

const ADMIN = { email: 'admin@standby.example', password: 'standby-admin-pass' };
const SECRETS = { 'SB-01': 'sb01-right-secret', 'SB-02': 'sb02-right-secret' } as const;
const LEADS = /is leader since/;
const STANDS_BY = /standing by for the workers' leadership/;

let db: TestDb;
let stack: ClusterStack;
let leader: ApiClient;
let standby: ApiClient;
const rigs: MqttClient[] = [];

interface Workers {
  role: string;
  processId?: string;
}

async function workersOf(client: ApiClient): Promise<Workers> {
  const r = await client.request<{ workers: Workers }>('GET', '/api/health');
  return r.body.workers;
}

async function statsOf(client: ApiClient): Promise<TelemetryStats> {
  const r = await client.request<TelemetryStats>('GET', '/api/telemetry/stats');
  expect(r.status).toBe(200);
  return r.body;
}

const rigClient = (port: number, code: keyof typeof SECRETS) =>
  connectClient(port, { clientId: `rig-${code}`, username: `rig-${code.toLowerCase()}`, password: SECRETS[code], connectTimeout: 15_000 });

beforeAll(async () => {
  db = await createTestDb();
  await db.ds.getRepository(UserEntity).insert({
    email: ADMIN.email,
    name: 'Standby admin',
    role: 'admin',
    passwordHash: await bcrypt.hash(ADMIN.password, 4),
  });
  for (const [code, secret] of Object.entries(SECRETS)) await insertTestRig(db.ds, code, { secret });
  const base = Number(process.env.EMBERLOT_TEST_REDIS_PORT ?? 0);
  if (base > 0) process.env.EMBERLOT_TEST_REDIS_PORT_STANDBY = String(base + 3);
  stack = await startClusterStack(db.config, {
    redisPortEnv: 'EMBERLOT_TEST_REDIS_PORT_STANDBY',
    name: 'test-standby',
    extraEnv: { EMBERLOT_WORKERS: 'elect' },
  });
  // A (the stack's API process) leads before B starts, so B stands by.
  await stack.api.waitForLine(LEADS, START_TIMEOUT_MS);
  const portB = await freePort();
  const b = spawnTs('api-b', 'server/main.ts', { ...stack.env, EMBERLOT_PORT: String(portB) });
  await b.waitForLine(STANDS_BY, START_TIMEOUT_MS);
  await b.waitForLine(READY.api, START_TIMEOUT_MS);
  leader = stack.client;
  standby = apiClient(`http://127.0.0.1:${portB}`);
  await leader.signIn(ADMIN.email, ADMIN.password);
  await standby.signIn(ADMIN.email, ADMIN.password);
}, 150_000);

afterAll(async () => {
  await Promise.all(rigs.map((c) => c.endAsync(true).catch(() => undefined)));
  await stopAllProcesses(3000);
  await stack?.stopRedis();
  await db?.drop();
});

async function poll<T>(read: () => Promise<T>, ok: (v: T) => boolean, label: string, ms = 30_000): Promise<T> {
  const deadline = Date.now() + ms;
  for (;;) {
    const v = await read();
    if (ok(v)) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}; last: ${JSON.stringify(v)}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

test("the standby's /api/telemetry/stats carries the leader's live ingest figures, naming the leader and their age", async () => {
  const a = await workersOf(leader);
  const b = await workersOf(standby);
  expect(a.role).toBe('leader');
  expect(b.role).toBe('standby');

  // Telemetry from a rig on broker B, stored by the leader's ingest (subscribed through broker A).
  const rig = await rigClient(stack.brokerPorts[1], 'SB-01');
  rigs.push(rig);
  const t0 = Date.now() - 60_000;
  for (let seq = 1; seq <= 3; seq++) {
    const sample = {
      v: 1,
      rig: 'SB-01',
      seq,
      ts: new Date(t0 + seq * 1000).toISOString(),
      stressClockS: seq,
      chamberC: 125,
      humidityPct: null,
      setpointC: 125,
      sockets: [0, 1, 2, 3].map((i) => ({ i, caseC: 126 + i, vV: 40, iA: 0.2, biasOn: true, tripped: false })),
    };
    await rig.publishAsync(topics.telemetry('SB-01'), JSON.stringify(sample), { qos: 1 });
  }

  const own = await poll(
    () => statsOf(leader),
    (s) => (s.live?.batches ?? 0) >= 1,
    "the leader's ingest storing the rig's samples",
  );
  expect(own.liveSource).toMatchObject({ kind: 'own', processId: a.processId, ageSeconds: 0 });

  // Before this change the standby answered live: null.
  const relayed = await poll(
    () => statsOf(standby),
    (s) => (s.live?.batches ?? 0) >= 1,
    "the leader's figures on the standby",
  );
  expect(relayed.liveSource?.kind).toBe('leader');
  expect(relayed.liveSource?.processId).toBe(a.processId);
  expect(relayed.live).toMatchObject({ mqttConnected: true, databaseOk: true, bufferLimit: own.live?.bufferLimit });
  // Their age: measured on the leader, counted here since they arrived (sent every 2 s, shown up to 60 s).
  const age = relayed.liveSource?.ageSeconds ?? Number.NaN;
  expect(age).toBeGreaterThanOrEqual(0);
  expect(age).toBeLessThanOrEqual(60);
  expect(Date.parse(relayed.liveSource?.measuredAt ?? '')).toBeGreaterThan(t0);
  // The durable counters are the same table for both.
  expect(relayed.counters).toEqual((await statsOf(leader)).counters);
});

test('a revocation made through the standby disconnects the rig connected to broker B at once, and its secret no longer signs in', async () => {
  const rig = await rigClient(stack.brokerPorts[1], 'SB-02');
  rigs.push(rig);
  expect((await workersOf(standby)).role).toBe('standby');
  const closed = waitClosed(rig, 15_000);
  const r = await standby.request<{ code: string; disconnectRequested: boolean; credentialsRevokedAt: string | null }>(
    'POST',
    '/api/rigs/SB-02/revoke',
    { reason: 'Secret shown on a shared screen' },
  );
  expect(r.status).toBe(200);
  expect(r.body.disconnectRequested).toBe(true);
  expect(r.body.credentialsRevokedAt).not.toBeNull();
  await closed; // before: connected until it reconnected by itself
  expect(rig.connected).toBe(false);
  await expect(rigClient(stack.brokerPorts[1], 'SB-02')).rejects.toMatchObject({ code: 4 });
});
