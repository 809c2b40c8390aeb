/**
 * Ingest end to end: the real broker (createEmberlotBroker with the PostgreSQL authenticator),
 * simulated rigs (rig-simulator) or raw mqtt.js publishers, and the server's telemetry feature on
 * a test database. Checks: exactly what was published is stored (by seq), across a broker restart
 * and a database outage; replays store nothing twice but are confirmed again; malformed messages
 * land only in rejected_messages with a reason; `stored` lets the rig's outbox drain.
 */
import type { MqttClient } from 'mqtt';
import { Client, type Pool } from 'pg';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { startRig, type RigHandle } from '../../rig-simulator';
import { parseCommand, topics, type SeqRange } from '../../shared/mqtt';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import {
  RIG_STATUS_CHANGED,
  TELEMETRY_LANDED,
  type RigStatusChanged,
  type TelemetryLanded,
} from '../../server/modules/telemetry/contracts';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { recoverRollups, ROLLUP_WATERMARK } from '../../server/modules/telemetry/rollups';
import { createTestDb, insertTestRig, testDbConfig, type TestDb } from '../support/db';
import { connectClient, sleep, waitFor } from './mqtt-test-helpers';

jest.setTimeout(30_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRETS: Record<string, string> = { 'OV-01': 'ov01-ingest-secret', 'OV-02': 'ov02-ingest-secret', 'OV-03': 'ov03-ingest-secret' };

let db: TestDb;
let eb: EmberlotBroker;
let port = 0;
let ctx: AppContext;
let stopTelemetry: (() => Promise<void>) | null = null;
const logs: string[] = [];
const landed = new Map<string, number>(); // `${rig}|${seq}` → times emitted
const statusEvents: RigStatusChanged[] = [];
const rigIds: Record<string, string> = {};
const rigs: RigHandle[] = [];
const clients: MqttClient[] = [];

const authenticate = () => createPgAuthenticate({ pool: pgPoolOf(ctx), server: SERVER, verifiedCacheSize: 100 });
const startBroker = (p = 0) => createEmberlotBroker({ port: p, authenticate: authenticate() });

async function count(sql: string, params: unknown[] = []): Promise<number> {
  const [{ n }] = await db.ds.query(sql, params);
  return Number(n);
}
const batches = (rig: string) => count('SELECT count(*) AS n FROM telemetry_batches WHERE rig_id = $1', [rigIds[rig]]);
const samples = (rig: string) => count('SELECT count(*) AS n FROM telemetry_samples WHERE rig_id = $1', [rigIds[rig]]);
const counter = (name: string) => count(`SELECT COALESCE((SELECT value FROM system_counters WHERE name = $1), 0) AS n`, [name]);

async function seqsOf(rig: string): Promise<number[]> {
  const rows: Array<{ seq: string }> = await db.ds.query('SELECT seq FROM telemetry_batches WHERE rig_id = $1 ORDER BY seq', [rigIds[rig]]);
  return rows.map((r) => Number(r.seq));
}
const range = (a: number, b: number) => Array.from({ length: b - a + 1 }, (_, k) => a + k);

/** Message times near the server's clock: the ingest refuses a `ts` outside its window (TELEMETRY_TS_MAX_*). */
const T_BASE = Math.floor(Date.now() / 60_000) * 60_000 - 3_600_000;

function telemetryPayload(rig: string, seq: number, extra: Record<string, unknown> = {}) {
  return JSON.stringify({
    v: 1,
    rig,
    seq,
    ts: new Date(T_BASE + seq * 250).toISOString(),
    stressClockS: seq * 900,
    chamberC: 125,
    humidityPct: null,
    setpointC: 125,
    sockets: [0, 1, 2, 3].map((i) => ({ i, caseC: 126 + i, vV: 40, iA: 0.2, biasOn: true, tripped: false })),
    ...extra,
  });
}

beforeAll(async () => {
  db = await createTestDb();
  for (const [code, secret] of Object.entries(SECRETS)) rigIds[code] = await insertTestRig(db.ds, code, { secret });
  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  eb = await startBroker();
  port = eb.port;
  ctx.events.on(TELEMETRY_LANDED, (l: TelemetryLanded) =>
    landed.set(`${l.rigCode}|${l.seq}`, (landed.get(`${l.rigCode}|${l.seq}`) ?? 0) + 1),
  );
  ctx.events.on(RIG_STATUS_CHANGED, (s: RigStatusChanged) => statusEvents.push(s));
  stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${port}`, ...SERVER },
    clientId: 'emberlot-server-ingest-test',
    log: (l) => logs.push(l),
    retryMinMs: 50,
    retryMaxMs: 400,
    sweepEveryMs: 60_000,
  });
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
});

afterAll(async () => {
  for (const r of rigs) await r.stop();
  await Promise.all(clients.map((c) => c.endAsync(true).catch(() => undefined)));
  await stopTelemetry?.();
  await eb?.close();
  await db?.drop();
});

function simRig(code: string, samplesN: number, extra: Partial<Parameters<typeof startRig>[0]> = {}): RigHandle {
  const rig = startRig({
    rigCode: code,
    brokerUrl: `mqtt://127.0.0.1:${port}`,
    username: `rig-${code.toLowerCase()}`,
    password: SECRETS[code],
    sockets: 8,
    chamberC: 120,
    setpointC: 125,
    biasOn: true,
    samplePeriodWallS: 0.02,
    maxSamples: samplesN,
    resendAfterWallS: 1,
    reconnectWallS: 0.1,
    ...extra,
  });
  rigs.push(rig);
  return rig;
}

test('a simulated rig: every published sample stored exactly once, outbox drained by `stored`', async () => {
  const rig = simRig('OV-01', 120);
  await rig.drained(15_000);
  expect(rig.stats.samples).toBe(120);
  expect(rig.outbox.size).toBe(0);
  expect(rig.stats.storedConfirmed).toBeGreaterThanOrEqual(120);
  expect(await seqsOf('OV-01')).toEqual(range(1, 120));
  expect(await samples('OV-01')).toBe(120 * 8);
  for (const s of range(1, 120)) expect(landed.get(`OV-01|${s}`)).toBe(1);
  // The rig row follows the newest message; the status message marked it online.
  const [row] = await db.ds.query('SELECT last_seq, online, chamber_c, setpoint_c FROM rigs WHERE code = $1', ['OV-01']);
  expect(Number(row.last_seq)).toBe(120);
  expect(row.online).toBe(true);
  expect(row.setpoint_c).toBe(125);
  expect(statusEvents.some((e) => e.rigCode === 'OV-01' && e.online)).toBe(true);
  // Rollups: chamber (socket −1) plus 8 sockets; n adds up to the messages stored. They are
  // written every few seconds (rollups.ts); drain() writes what is held now.
  expect(await ctx.services.telemetryIngest!.drain()).toBe(true);
  expect(await count('SELECT sum(n) AS n FROM telemetry_rollups WHERE rig_id = $1 AND socket = -1', [rigIds['OV-01']])).toBe(120);
  expect(await count('SELECT sum(n) AS n FROM telemetry_rollups WHERE rig_id = $1', [rigIds['OV-01']])).toBe(120 * 9);
  await rig.stop();
  await waitFor(() => statusEvents.some((e) => e.rigCode === 'OV-01' && !e.online), 5000, 'offline status');
});

test('rollups lost in a crash are rebuilt exactly from the stored samples, only since the watermark', async () => {
  const rig = rigIds['OV-01'];
  const ingest = ctx.services.telemetryIngest!;
  expect(await ingest.drain()).toBe(true);
  const snapshot = () =>
    db.ds.query(
      `SELECT socket, minute, n, round(sum_c::numeric, 3) AS sum_c, min_c, max_c, stress_clock_s FROM telemetry_rollups
       WHERE rig_id = $1 ORDER BY socket, minute`,
      [rig],
    );
  const before = await snapshot();
  expect(before.length).toBeGreaterThan(0);
  // What a crash leaves: the held part never written (rows gone) and a minute half written.
  await db.ds.query('DELETE FROM telemetry_rollups WHERE rig_id = $1 AND socket >= 4', [rig]);
  await db.ds.query('UPDATE telemetry_rollups SET n = n - 1, sum_c = sum_c - 100 WHERE rig_id = $1 AND socket = 1', [rig]);
  // A watermark later than every batch (+ the margin): nothing to rebuild, nothing touched.
  await db.ds.query(`UPDATE system_counters SET value = (extract(epoch FROM now()) * 1000)::bigint + 600000 WHERE name = $1`, [
    ROLLUP_WATERMARK,
  ]);
  expect(await recoverRollups(pgPoolOf(ctx))).toBe(0);
  expect((await snapshot()).length).toBeLessThan(before.length);
  // The watermark of a real flush (the batches are seconds old): every touched minute rebuilt.
  await db.ds.query(`UPDATE system_counters SET value = (extract(epoch FROM now()) * 1000)::bigint - 1000 WHERE name = $1`, [
    ROLLUP_WATERMARK,
  ]);
  expect(await recoverRollups(pgPoolOf(ctx))).toBeGreaterThan(0);
  const after = await snapshot();
  // Same rows; sums equal to the in-memory ones up to the real (float4) storage of the samples.
  expect(
    after.map((r: { socket: number; minute: Date; n: number; min_c: number; max_c: number }) => [
      r.socket,
      r.minute.toISOString(),
      r.n,
      r.min_c,
      r.max_c,
    ]),
  ).toEqual(
    before.map((r: { socket: number; minute: Date; n: number; min_c: number; max_c: number }) => [
      r.socket,
      r.minute.toISOString(),
      r.n,
      r.min_c,
      r.max_c,
    ]),
  );
  after.forEach((r: { sum_c: string }, k: number) =>
    expect(Math.abs(Number(r.sum_c) - Number(before[k].sum_c))).toBeLessThan(1e-3 * Math.max(1, Math.abs(Number(before[k].sum_c)))),
  );
  expect(await count('SELECT sum(n) AS n FROM telemetry_rollups WHERE rig_id = $1 AND socket = -1', [rig])).toBe(
    await count('SELECT count(*) AS n FROM telemetry_batches WHERE rig_id = $1', [rig]),
  );
});

test('broker restarted mid-run: nothing lost, nothing stored twice', async () => {
  const before = await batches('OV-01');
  expect(before).toBe(120);
  const rig = simRig('OV-01', 150, { seqStart: 120 });
  await waitFor(() => rig.stats.samples >= 40, 5000, 'samples before the outage');
  await eb.close();
  await sleep(400);
  eb = await startBroker(port);
  await rig.drained(20_000);
  expect(rig.stats.connects).toBeGreaterThanOrEqual(2);
  expect(await seqsOf('OV-01')).toEqual(range(1, 270));
  expect(await samples('OV-01')).toBe(270 * 8);
  for (const s of range(121, 270)) expect(landed.get(`OV-01|${s}`)).toBe(1);
  await rig.stop();
});

test('a replay of already-stored seqs stores nothing twice but is confirmed again', async () => {
  const rig = await connectClient(port, { clientId: 'rig-OV-02', username: 'rig-ov-02', password: SECRETS['OV-02'] });
  clients.push(rig);
  const confirmed: SeqRange[] = [];
  rig.on('message', (_t, payload) => {
    const cmd = parseCommand(payload);
    if (cmd.ok && cmd.data.type === 'stored') confirmed.push(...cmd.data.ranges);
  });
  await rig.subscribeAsync(topics.commands('OV-02'), { qos: 1 });
  const isConfirmed = (s: number) => confirmed.some(([a, b]) => s >= a && s <= b);
  for (const s of range(1, 20)) rig.publish(topics.telemetry('OV-02'), telemetryPayload('OV-02', s), { qos: 1 });
  await waitFor(() => range(1, 20).every(isConfirmed), 5000, 'first confirmation');
  const dupsBefore = await counter('ingest_duplicates');
  confirmed.length = 0;
  for (const s of range(1, 25)) rig.publish(topics.telemetry('OV-02'), telemetryPayload('OV-02', s), { qos: 1 });
  await waitFor(() => range(1, 25).every(isConfirmed), 5000, 'replay confirmation');
  expect(await seqsOf('OV-02')).toEqual(range(1, 25));
  expect(await samples('OV-02')).toBe(25 * 4);
  expect((await counter('ingest_duplicates')) - dupsBefore).toBe(20);
  for (const s of range(1, 25)) expect(landed.get(`OV-02|${s}`)).toBe(1);
  // A seq re-used with different content is kept once and reported.
  rig.publish(
    topics.telemetry('OV-02'),
    telemetryPayload('OV-02', 3, { chamberC: 99, ts: new Date(T_BASE + 86_400_000 / 2).toISOString() }),
    { qos: 1 },
  );
  await waitFor(() => isConfirmed(3), 5000, 'conflict confirmation');
  await sleep(200);
  expect(await counter('ingest_seq_conflicts')).toBe(1);
  const [b] = await db.ds.query('SELECT chamber_c FROM telemetry_batches WHERE rig_id = $1 AND seq = 3', [rigIds['OV-02']]);
  expect(b.chamber_c).toBe(125);
});

test('malformed and unknown-rig messages are stored only as rejections, with reasons', async () => {
  const rig = await connectClient(port, { clientId: 'rig-OV-03', username: 'rig-ov-03', password: SECRETS['OV-03'] });
  const spoof = await connectClient(port, { clientId: 'emberlot-spoof-test', ...SERVER });
  clients.push(rig, spoof);
  const countsBefore = {
    batches: await count('SELECT count(*) AS n FROM telemetry_batches'),
    samples: await count('SELECT count(*) AS n FROM telemetry_samples'),
  };
  const rejectedBefore = await counter('ingest_rejected');
  const T = topics.telemetry('OV-03');
  const bad: Array<[string, string]> = [
    [T, '{"v":1,"rig":"OV-03","seq":'],
    [T, telemetryPayload('OV-03', 1, { v: 3 })],
    [T, telemetryPayload('OV-03', 2, { chamberC: 900 })],
    [T, telemetryPayload('OV-03', 3, { rig: 'OV-01' })],
    [T, telemetryPayload('OV-03', 4, { sockets: [{ i: 0, caseC: 'hot', vV: 1, iA: 0, biasOn: true, tripped: false }] })],
    [topics.status('OV-03'), '{"v":1,"rig":"OV-03","online":"yes"}'],
  ];
  for (const [topic, payload] of bad) rig.publish(topic, payload, { qos: 1 });
  // Unknown rig: only the server principal could publish there; the ingest refuses the code.
  spoof.publish(topics.telemetry('OV-77'), telemetryPayload('OV-77', 1), { qos: 1 });
  const deadline = Date.now() + 5000;
  while ((await counter('ingest_rejected')) - rejectedBefore < 7 && Date.now() < deadline) await sleep(50);
  expect((await counter('ingest_rejected')) - rejectedBefore).toBe(7);
  const rows: Array<{ rig_code: string; reason: string; excerpt: string }> = await db.ds.query(
    `SELECT rig_code, reason, excerpt FROM rejected_messages WHERE rig_code IN ('OV-03', 'OV-77') ORDER BY id`,
  );
  const reasons = rows.map((r) => r.reason).join('\n');
  expect(reasons).toMatch(/not valid JSON/);
  expect(reasons).toMatch(/v: /);
  expect(reasons).toMatch(/chamberC/);
  expect(reasons).toMatch(/payload names rig OV-01 but the topic is rig OV-03/);
  expect(reasons).toMatch(/sockets\.0\.caseC/);
  expect(reasons).toMatch(/status: online/);
  expect(reasons).toMatch(/unknown rig code OV-77/);
  expect(rows.every((r) => r.excerpt.length > 0 && r.excerpt.length < 400)).toBe(true);
  expect(await count('SELECT count(*) AS n FROM telemetry_batches')).toBe(countsBefore.batches);
  expect(await count('SELECT count(*) AS n FROM telemetry_samples')).toBe(countsBefore.samples);
});

test('database unavailable mid-run: messages wait, nothing is lost or doubled, ingest_dropped stays 0', async () => {
  const admin = new Client(testDbConfig('postgres'));
  await admin.connect();
  const name = db.config.database;
  try {
    const rig = simRig('OV-01', 120, { seqStart: 270 });
    await waitFor(() => rig.stats.samples >= 20, 5000, 'samples before the outage');
    await admin.query(`ALTER DATABASE "${name}" ALLOW_CONNECTIONS false`);
    await admin.query('SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = $1 AND pid <> pg_backend_pid()', [name]);
    await sleep(1200);
    const held = ctx.services.telemetryIngest!.stats();
    expect(held.databaseOk).toBe(false);
    expect(held.buffered).toBeGreaterThan(0);
    await admin.query(`ALTER DATABASE "${name}" ALLOW_CONNECTIONS true`);
    await rig.drained(20_000);
    expect(await seqsOf('OV-01')).toEqual(range(1, 390));
    expect(await samples('OV-01')).toBe(390 * 8);
    expect(await counter('ingest_dropped')).toBe(0);
    expect(logs.filter((l) => l.startsWith('database write failed')).length).toBe(1);
    expect(logs.some((l) => l.startsWith('database back'))).toBe(true);
    for (const s of range(271, 390)) expect(landed.get(`OV-01|${s}`)).toBe(1);
    await rig.stop();
  } finally {
    await admin.query(`ALTER DATABASE "${name}" ALLOW_CONNECTIONS true`).catch(() => undefined);
    await admin.end();
  }
});

test('RigLink: a command is acknowledged; one sent while the rig is away waits and goes out with the same cmdId', async () => {
  const link = ctx.services.rigLink!;
  const rig = simRig('OV-03', 100000, { samplePeriodWallS: 0.2 });
  await waitFor(() => rig.connected, 5000, 'rig connected');
  const ack = await link.send('OV-03', { type: 'setpoint', setpointC: 130 }, { cmdId: 'test:setpoint:1' });
  expect(ack).toMatchObject({ ok: true, cmdId: 'test:setpoint:1' });
  await expect(link.send('OV-03', { type: 'setpoint', setpointC: 900 })).rejects.toThrow(/Invalid command/);
  await expect(
    link.send('OV-03', { type: 'setpoint', setpointC: 150 }, { cmdId: 'test:setpoint:2', timeoutMs: 3000 }),
  ).resolves.toMatchObject({ ok: true });
  rig.dropFor(700);
  const later = link.send('OV-03', { type: 'bias', sockets: [0, 1], on: false }, { cmdId: 'test:bias:1', timeoutMs: 8000 });
  await expect(later).resolves.toMatchObject({ ok: true, cmdId: 'test:bias:1' });
  expect(rig.stats.commandsApplied).toBe(3);
  await expect(link.send('OV-03', { type: 'trip', socket: 200, reason: 'test' }, { timeoutMs: 3000 })).rejects.toThrow(/refused/);
  await rig.stop();
});

test('buffer full (database down): new messages are turned away unconfirmed and counted in ingest_dropped', async () => {
  const { TelemetryIngest } = await import('../../server/modules/telemetry/ingest');
  let down = true;
  const badPool = {
    connect: async () => Promise.reject(Object.assign(new Error('connect ECONNREFUSED 127.0.0.1:1'), { code: 'ECONNREFUSED' })),
  } as unknown as Pool;
  const stored: number[] = [];
  const lines: string[] = [];
  const ingest = new TelemetryIngest(
    {
      pool: () => (down ? badPool : pgPoolOf(ctx)),
      events: ctx.events,
      publishStored: (_rig, cmd) => cmd.ranges.forEach(([a, b]) => stored.push(...range(a, b))),
    },
    { bufferLimit: 5, retryMinMs: 20, retryMaxMs: 50, log: (l) => lines.push(l) },
  );
  const droppedBefore = await counter('ingest_dropped');
  for (const s of range(1, 8)) ingest.handleMessage(topics.telemetry('OV-03'), Buffer.from(telemetryPayload('OV-03', 1000 + s)));
  // A re-send of a held message merges into it (not a drop).
  ingest.handleMessage(topics.telemetry('OV-03'), Buffer.from(telemetryPayload('OV-03', 1001)));
  await sleep(150);
  expect(ingest.stats()).toMatchObject({ buffered: 5, dropped: 3, merged: 1, databaseOk: false });
  expect(stored).toEqual([]);
  expect(lines.filter((l) => l.startsWith('buffer full')).length).toBe(1);
  down = false;
  expect(await ingest.drain(5000)).toBe(true);
  expect(stored.sort((a, b) => a - b)).toEqual(range(1001, 1005));
  expect((await counter('ingest_dropped')) - droppedBefore).toBe(3);
  await ingest.stop();
  await db.ds.query('UPDATE system_counters SET value = 0 WHERE name = $1', ['ingest_dropped']);
});

test('server started before the broker: retries quietly, logs once, connects when the broker appears', async () => {
  const probe = await startBroker();
  const laterPort = probe.port;
  await probe.close();
  const ctx2 = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  const lines: string[] = [];
  const stop2 = await startTelemetry(ctx2, {
    mqtt: { url: `mqtt://127.0.0.1:${laterPort}`, ...SERVER },
    clientId: 'emberlot-server-late-broker',
    log: (l) => lines.push(l),
    sweepEveryMs: 60_000,
  });
  let late: EmberlotBroker | null = null;
  try {
    await sleep(1500);
    const link = ctx2.services.rigLink!;
    expect(link.connected()).toBe(false);
    expect(lines.filter((l) => l.includes('broker not reachable')).length).toBe(1);
    late = await startBroker(laterPort);
    await waitFor(() => link.connected(), 8000, 'link connects to the late broker');
    expect(lines.some((l) => /reconnected|connected to/.test(l))).toBe(true);
  } finally {
    await stop2();
    await late?.close();
  }
});

test('listeners behind (protection, thermal tracker): no batch starts while their backlog is over the limit; the hold is bounded', async () => {
  const { TelemetryIngest } = await import('../../server/modules/telemetry/ingest');
  let backlog = 5_000;
  const stored: number[] = [];
  const make = (maxBacklogHoldMs: number) =>
    new TelemetryIngest(
      {
        pool: () => pgPoolOf(ctx),
        events: ctx.events,
        publishStored: (_rig, cmd) => cmd.ranges.forEach(([a, b]) => stored.push(...range(a, b))),
        listenerBacklog: () => backlog,
      },
      { windowMs: 10, maxListenerBacklog: 100, maxBacklogHoldMs },
    );
  // Held while the listeners are behind; written as soon as they catch up.
  const held = make(60_000);
  for (const s of range(1101, 1103)) held.handleMessage(topics.telemetry('OV-03'), Buffer.from(telemetryPayload('OV-03', s)));
  await sleep(300);
  expect(held.stats()).toMatchObject({ buffered: 3, batches: 0 });
  expect(stored).toEqual([]);
  backlog = 100; // at the limit: not over it
  expect(await held.drain(5000)).toBe(true);
  expect(stored).toEqual(range(1101, 1103));
  expect(held.stats()).toMatchObject({ buffered: 0 });
  await held.stop();

  // A listener that never catches up cannot stop ingest: after the hold one batch goes anyway.
  backlog = 5_000;
  stored.length = 0;
  const bounded = make(400);
  const t0 = Date.now();
  for (const s of range(1201, 1203)) bounded.handleMessage(topics.telemetry('OV-03'), Buffer.from(telemetryPayload('OV-03', s)));
  await sleep(150);
  expect(stored).toEqual([]);
  await waitFor(() => stored.length === 3, 5000, 'the batch after the hold');
  expect(Date.now() - t0).toBeGreaterThanOrEqual(400);
  expect(stored).toEqual(range(1201, 1203));
  await bounded.stop();
});
