/**
 * Issue #18, the rig side (points 4, 6, 7): a real aedes broker with the production authenticator
 * (PostgreSQL), the server's real MQTT link and ingest, live protection, the API, and rigs played
 * by plain mqtt.js clients on loopback.
 */
import type { MqttClient } from 'mqtt';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { parseCommandAck, parseStatus, topics, TELEMETRY_TS_MAX_AHEAD_MS, TELEMETRY_TS_MAX_BEHIND_MS } from '../../shared/mqtt';
import { isStorableText } from '../../shared/storable-text';
import { AlarmEntity } from '../../server/db/entities';
import { startProtectionFeature, type ProtectionFeature } from '../../server/modules/protection/start';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestRig } from '../support/db';
import { connectClient, sleep, waitClosed, waitFor } from './mqtt-test-helpers';

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRET = 'rig-secret-for-tests';

let t: TestApp;
let eb: EmberlotBroker;
let feature: ProtectionFeature;
let stopTelemetry: (() => Promise<void>) | undefined;
const rigIds: Record<string, string> = {};
const clients: MqttClient[] = [];
let seq = 0;

const rigClient = async (code: string) => {
  const c = await connectClient(eb.port, { clientId: `rig-${code}`, username: `rig-${code.toLowerCase()}`, password: SECRET });
  clients.push(c);
  return c;
};

function telemetry(code: string, over: Record<string, unknown> = {}, sockets = [0, 1, 2, 3], caseOf = (_i: number) => 125.5): string {
  return JSON.stringify({
    v: 2,
    rig: code,
    seq: ++seq,
    ts: new Date().toISOString(),
    stressClockS: seq * 10,
    chamberC: 125,
    humidityPct: null,
    setpointC: 125,
    socket: sockets,
    caseC: sockets.map(caseOf),
    vV: sockets.map(() => 20),
    iA: sockets.map(() => 0.05),
    flags: sockets.map(() => 1),
    ...over,
  });
}

async function q<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
  return t.ctx.ds.query(sql, params);
}
const batchesOf = async (code: string) =>
  Number((await q<{ n: string }>('SELECT count(*) AS n FROM telemetry_batches WHERE rig_id = $1', [rigIds[code]]))[0].n);
const storedSeq = async (code: string, s: number) =>
  (await q('SELECT 1 FROM telemetry_batches WHERE rig_id = $1 AND seq = $2', [rigIds[code], s])).length === 1;
const rejectionsOf = (code: string) =>
  q<{ reason: string; topic: string }>('SELECT reason, topic FROM rejected_messages WHERE rig_code = $1 ORDER BY id', [code]);

async function until(cond: () => Promise<boolean>, timeoutMs: number, label: string): Promise<void> {
  const t0 = Date.now();
  while (!(await cond())) {
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out waiting for ${label}`);
    await sleep(50);
  }
}

beforeAll(async () => {
  t = await createTestApp();
  for (const code of ['SR-01', 'SR-02', 'SR-03', 'SR-04'])
    rigIds[code] = await insertTestRig(t.ctx.ds, code, { secret: SECRET, sockets: 4 });
  eb = await createEmberlotBroker({ port: 0, authenticate: createPgAuthenticate({ pool: pgPoolOf(t.ctx), server: SERVER }) });
  stopTelemetry = await startTelemetry(t.ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, ...SERVER },
    clientId: 'emberlot-server-security-test',
    log: () => undefined,
  });
  await waitFor(() => t.ctx.services.rigLink!.connected(), 5000, 'server link');
  feature = await startProtectionFeature(t.ctx, { mail: { attempts: 1, backoffMs: 10 } });
});

afterAll(async () => {
  await Promise.all(clients.map((c) => c.endAsync(true).catch(() => undefined)));
  await feature?.stop();
  await stopTelemetry?.();
  await eb?.close();
  await t?.close();
});

describe('point 4: deactivating a rig cuts it off', () => {
  test('the open MQTT session is kicked at once, the reconnect refused, and telemetry still in flight is refused with the reason', async () => {
    const rig = await rigClient('SR-01');
    await rig.publishAsync(topics.telemetry('SR-01'), telemetry('SR-01'), { qos: 1 });
    const firstSeq = seq;
    await until(() => storedSeq('SR-01', firstSeq), 5000, 'first message stored');

    const admin = await t.signIn('admin');
    const closed = waitClosed(rig, 3000);
    const t0 = Date.now();
    const res = await admin.patch('/api/rigs/SR-01').send({ active: false });
    expect(res.status).toBe(200);
    expect(res.body.active).toBe(false);
    await closed; // kicked like a revocation
    expect(Date.now() - t0).toBeLessThan(3000);
    expect(eb.counters.revokedKicks).toBeGreaterThanOrEqual(1);
    await expect(connectClient(eb.port, { clientId: 'rig-SR-01', username: 'rig-sr-01', password: SECRET })).rejects.toMatchObject({
      code: 4,
    });

    // A message that was already on its way (the server may publish on any rig topic: it plays it).
    const before = await batchesOf('SR-01');
    const server = await connectClient(eb.port, { clientId: 'security-test-replayer', ...SERVER });
    clients.push(server);
    await server.publishAsync(topics.telemetry('SR-01'), telemetry('SR-01'), { qos: 1 });
    const lateSeq = seq;
    await until(async () => (await rejectionsOf('SR-01')).some((r) => r.reason.includes('deactivated')), 5000, 'rejection');
    await t.ctx.services.telemetryIngest!.drain();
    expect(await storedSeq('SR-01', lateSeq)).toBe(false);
    expect(await batchesOf('SR-01')).toBe(before);
    const reasons = (await rejectionsOf('SR-01')).map((r) => r.reason);
    expect(reasons).toContain('telemetry: rig SR-01 is deactivated; its telemetry is not stored');
  });
});

describe("point 7: telemetry is checked against the rig's registration", () => {
  test('a socket beyond the socket count, humidity without humidity control and timestamps from 1970 and 9999 are refused with reasons; nothing is stored and no alarm is raised', async () => {
    const rig = await rigClient('SR-02');
    const before = await batchesOf('SR-02');
    const bad = [
      // socket 200 on a 4-socket rig, hot enough that protection would trip it
      telemetry('SR-02', {}, [0, 1, 2, 200], (i) => (i === 200 ? 400 : 125.5)),
      telemetry('SR-02', { humidityPct: 85 }),
      telemetry('SR-02', { ts: '1970-01-01T00:00:00.000Z' }),
      telemetry('SR-02', { ts: '9999-12-31T23:59:59.000Z' }),
    ];
    const badSeqs = [seq - 3, seq - 2, seq - 1, seq];
    for (const p of bad) await rig.publishAsync(topics.telemetry('SR-02'), p, { qos: 1 });
    // A good message after them: the pipeline is live, so "not stored" below means refused.
    await rig.publishAsync(topics.telemetry('SR-02'), telemetry('SR-02'), { qos: 1 });
    const goodSeq = seq;
    await until(() => storedSeq('SR-02', goodSeq), 5000, 'the good message');
    await t.ctx.services.telemetryIngest!.drain();
    await feature.idle();

    for (const s of badSeqs) expect(await storedSeq('SR-02', s)).toBe(false);
    expect(await batchesOf('SR-02')).toBe(before + 1);
    const reasons = (await rejectionsOf('SR-02')).map((r) => r.reason);
    expect(reasons).toHaveLength(4);
    expect(reasons).toContain('telemetry: socket 200 does not exist on rig SR-02 (registered with 4 sockets, 0–3)');
    expect(reasons).toContain('telemetry: humidity 85 % from rig SR-02, which is registered without humidity control');
    expect(reasons.filter((r) => r.startsWith('telemetry: ts 1970-01-01T00:00:00.000Z is more than 30 days behind'))).toHaveLength(1);
    expect(reasons.filter((r) => r.startsWith('telemetry: ts 9999-12-31T23:59:59.000Z is more than 24 h ahead'))).toHaveLength(1);
    // Protection never saw socket 200: no alarm on this rig at all.
    expect(await t.ctx.ds.getRepository(AlarmEntity).countBy({ rigId: rigIds['SR-02'] })).toBe(0);
  });

  test('the window edges: a minute inside each edge is stored, a minute outside is refused', async () => {
    const rig = await rigClient('SR-04');
    const now = Date.now();
    const inside = [now - TELEMETRY_TS_MAX_BEHIND_MS + 60_000, now + TELEMETRY_TS_MAX_AHEAD_MS - 60_000];
    const outside = [now - TELEMETRY_TS_MAX_BEHIND_MS - 60_000, now + TELEMETRY_TS_MAX_AHEAD_MS + 60_000];
    const seqs: Record<'in' | 'out', number[]> = { in: [], out: [] };
    for (const [kind, list] of [
      ['in', inside],
      ['out', outside],
    ] as const) {
      for (const at of list) {
        await rig.publishAsync(topics.telemetry('SR-04'), telemetry('SR-04', { ts: new Date(at).toISOString() }), { qos: 1 });
        seqs[kind].push(seq);
      }
    }
    await until(
      async () => (await storedSeq('SR-04', seqs.in[0])) && (await storedSeq('SR-04', seqs.in[1])),
      5000,
      'messages inside the window',
    );
    await t.ctx.services.telemetryIngest!.drain();
    for (const s of seqs.out) expect(await storedSeq('SR-04', s)).toBe(false);
    expect(await rejectionsOf('SR-04')).toHaveLength(2);
  });
});

describe('point 6: text from rigs is made storable', () => {
  test('a trip refused with a NUL in its reason still updates the alarm: remove bias at the rig now', async () => {
    const rig = await rigClient('SR-03');
    const refusedReason = 'bias relay welded\u0000 interlock open';
    const trips: string[] = [];
    await rig.subscribeAsync(topics.commands('SR-03'), { qos: 1 });
    rig.on('message', (_topic, payload) => {
      const cmd = JSON.parse(payload.toString());
      if (cmd.type !== 'trip') return;
      trips.push(cmd.cmdId);
      rig.publish(topics.commandAcks('SR-03'), JSON.stringify({ v: 1, rig: 'SR-03', cmdId: cmd.cmdId, ok: false, error: refusedReason }), {
        qos: 1,
      });
    });
    // Socket 1 at 160 °C under bias: at or above the 150 °C rating protection assumes without a run.
    await rig.publishAsync(
      topics.telemetry('SR-03'),
      telemetry('SR-03', {}, [0, 1, 2, 3], (i) => (i === 1 ? 160 : 125.5)),
      { qos: 1 },
    );

    const repo = t.ctx.ds.getRepository(AlarmEntity);
    await until(
      async () => {
        const a = await repo.findOneBy({ rigId: rigIds['SR-03'], kind: 'runaway-trip' });
        return !!a && (a.details as Record<string, unknown>).command === 'not confirmed';
      },
      15_000,
      'the alarm to say the rig did not confirm',
    );
    const alarm = await repo.findOneByOrFail({ rigId: rigIds['SR-03'], kind: 'runaway-trip' });
    expect(trips.length).toBeGreaterThanOrEqual(1);
    expect(alarm.socketIndex).toBe(1);
    expect(alarm.message).toContain('The rig did not confirm the trip');
    expect(alarm.message).toContain('so the socket may still be energised');
    expect((alarm.details as Record<string, unknown>).action).toContain('Remove bias from socket 1 at SR-03 now');
    // The NUL became U+FFFD; the rest of the rig's words are kept.
    expect(alarm.message).toContain('bias relay welded\uFFFD interlock open');
    expect((alarm.details as Record<string, unknown>).commandError).toEqual(
      expect.stringContaining('bias relay welded\uFFFD interlock open'),
    );
  });

  test('every free-text field a rig sends parses to storable text (NUL and lone surrogates → U+FFFD)', () => {
    const ack = parseCommandAck('{"v":1,"rig":"SR-03","cmdId":"c-1","ok":false,"error":"a\\u0000b\\ud800c\\udc00d\\ud83d\\ude00"}');
    expect(ack).toEqual({ ok: true, data: { v: 1, rig: 'SR-03', cmdId: 'c-1', ok: false, error: 'a\uFFFDb\uFFFDc\uFFFDd\u{1F600}' } });
    const status = parseStatus(
      '{"v":1,"rig":"SR-03","online":true,"ts":"2026-12-04T10:00:00Z","firmware":"hg\\u0000-2.\\ud800","lastSeq":3}',
    );
    expect(status.ok && status.data.firmware).toBe('hg\uFFFD-2.\uFFFD');
    // A well-formed pair (an emoji) is kept as it is.
    expect(isStorableText('d\u{1F600}')).toBe(true);
  });
});
