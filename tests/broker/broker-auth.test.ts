import type { MqttClient } from 'mqtt';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { topics, parseStatus } from '../../shared/mqtt';
import { connectClient, endAll, mapAuthenticate, rigClient, serverClient, sleep, waitClosed, waitFor } from './mqtt-test-helpers';

const MAX = 16 * 1024;
let eb: EmberlotBroker;
const opened: MqttClient[] = [];
const track = (c: MqttClient) => (opened.push(c), c);

beforeAll(async () => {
  eb = await createEmberlotBroker({
    port: 0,
    authenticate: mapAuthenticate,
    maxPacketBytes: MAX,
    log: process.env.BROKER_LOG ? (l) => console.log(l) : undefined,
  });
});

afterEach(async () => {
  await endAll(opened.splice(0));
  eb.setAuthenticate(mapAuthenticate);
});

afterAll(async () => {
  await eb.close();
});

/** Server client subscribed to everything, collecting (topic, payload). */
async function spy() {
  const server = track(await serverClient(eb.port, `spy-${Math.random().toString(36).slice(2, 8)}`));
  const got: { topic: string; payload: string; retain: boolean }[] = [];
  server.on('message', (topic, payload, packet) => got.push({ topic, payload: payload.toString(), retain: packet.retain }));
  await server.subscribeAsync(topics.all.everything, { qos: 1 });
  return { server, got };
}

describe('broker authentication', () => {
  test('a rig with good credentials connects and is counted', async () => {
    const rig = track(await rigClient(eb.port, 'OV-01'));
    expect(rig.connected).toBe(true);
    await waitFor(() => eb.counters.connectedRigs === 1, 2000, 'connectedRigs 1');
    await rig.endAsync();
    await waitFor(() => eb.counters.connectedRigs === 0, 2000, 'connectedRigs 0');
  });

  test('a wrong password is refused and counted', async () => {
    const before = eb.counters.authFailures;
    await expect(connectClient(eb.port, { clientId: 'rig-OV-01', username: 'rig-OV-01', password: 'guess' })).rejects.toMatchObject({
      code: 4,
    });
    expect(eb.counters.authFailures).toBe(before + 1);
  });

  test('an unknown user is refused', async () => {
    await expect(connectClient(eb.port, { clientId: 'x1', username: 'nobody', password: 'x' })).rejects.toBeTruthy();
  });

  test("a rig cannot take another rig's client id (session takeover)", async () => {
    const before = eb.counters.authFailures;
    await expect(connectClient(eb.port, { clientId: 'rig-OV-02', username: 'rig-OV-01', password: 'ov01-secret' })).rejects.toMatchObject({
      code: 2,
    });
    await expect(
      connectClient(eb.port, { clientId: 'rig-OV-01', username: 'emberlot-server', password: 'server-secret' }),
    ).rejects.toMatchObject({ code: 2 });
    expect(eb.counters.authFailures).toBe(before + 2);
  });

  test('an authenticator failure answers "server unavailable" and is not an auth failure', async () => {
    eb.setAuthenticate(async () => {
      throw new Error('database down');
    });
    const failures = eb.counters.authFailures;
    await expect(rigClient(eb.port, 'OV-01')).rejects.toMatchObject({ code: 3 });
    expect(eb.counters.authFailures).toBe(failures);
    expect(eb.counters.authErrors).toBeGreaterThanOrEqual(1);
  });
});

describe('broker topic rules', () => {
  test("rig A publishing to rig B's telemetry is refused, counted and never delivered", async () => {
    const { got } = await spy();
    const rigA = track(await rigClient(eb.port, 'OV-01'));
    const before = eb.counters.spoofedPublishes;
    const closed = waitClosed(rigA);
    rigA.publish(topics.telemetry('OV-02'), '{"spoof":true}', { qos: 1 });
    await closed; // MQTT 3.1.1 has no negative PUBACK: aedes closes the client
    expect(eb.counters.spoofedPublishes).toBe(before + 1);
    await sleep(50);
    expect(got.filter((m) => m.topic === topics.telemetry('OV-02'))).toHaveLength(0);
  });

  test('a rig may publish to its own telemetry, status and command-acks', async () => {
    const { got } = await spy();
    const rig = track(await rigClient(eb.port, 'OV-01'));
    await rig.publishAsync(topics.telemetry('OV-01'), 't', { qos: 1 });
    await rig.publishAsync(topics.commandAcks('OV-01'), 'a', { qos: 1 });
    await rig.publishAsync(topics.status('OV-01'), 's', { qos: 1 });
    await waitFor(() => got.length >= 3, 2000, 'three messages');
    expect(got.map((m) => m.topic).sort()).toEqual([topics.commandAcks('OV-01'), topics.status('OV-01'), topics.telemetry('OV-01')].sort());
  });

  test('a rig cannot publish to its own commands (only the server can)', async () => {
    const rig = track(await rigClient(eb.port, 'OV-01'));
    const before = eb.counters.spoofedPublishes;
    const closed = waitClosed(rig);
    rig.publish(topics.commands('OV-01'), '{}', { qos: 1 });
    await closed;
    expect(eb.counters.spoofedPublishes).toBe(before + 1);
  });

  test("rig A cannot subscribe to rig B's commands; its own commands are fine", async () => {
    const rigA = track(await rigClient(eb.port, 'OV-01'));
    const before = eb.counters.refusedSubscriptions;
    // mqtt.js 5 rejects subscribeAsync when the broker grants 128 (refused).
    const attempt = rigA.subscribeAsync(topics.commands('OV-02'), { qos: 1 }).then(
      (granted) => granted.map((g) => g.qos),
      () => [128],
    );
    expect(await attempt).toEqual([128]);
    expect(eb.counters.refusedSubscriptions).toBe(before + 1);
    for (const filter of ['emberlot/v1/#', 'emberlot/v1/rigs/+/commands', '#']) {
      const r = await rigA.subscribeAsync(filter, { qos: 1 }).then(
        (g) => g.map((x) => x.qos),
        () => [128],
      );
      expect(r).toEqual([128]);
    }
    const own = await rigA.subscribeAsync(topics.commands('OV-01'), { qos: 1 });
    expect(own.map((g) => g.qos)).toEqual([1]);
  });

  test('the server client may subscribe to everything under emberlot/v1 and command any rig', async () => {
    const server = track(await serverClient(eb.port));
    const grants = await server.subscribeAsync(
      [topics.all.telemetry, topics.all.status, topics.all.commandAcks, topics.commands('OV-02')],
      { qos: 1 },
    );
    expect(grants.map((g) => g.qos)).toEqual([1, 1, 1, 1]);
    const rigB = track(await rigClient(eb.port, 'OV-02'));
    const received: string[] = [];
    rigB.on('message', (_t, p) => received.push(p.toString()));
    await rigB.subscribeAsync(topics.commands('OV-02'), { qos: 1 });
    await server.publishAsync(topics.commands('OV-02'), '{"hello":1}', { qos: 1 });
    await waitFor(() => received.length === 1, 2000, 'command delivered');
    // …but nothing outside the contract tree.
    const outside = await server.subscribeAsync('#', { qos: 0 }).then(
      (g) => g.map((x) => x.qos),
      () => [128],
    );
    expect(outside).toEqual([128]);
  });

  test('an oversized packet drops the connection, is counted and not delivered', async () => {
    const { got } = await spy();
    const rig = track(await rigClient(eb.port, 'OV-01'));
    const before = eb.counters.oversized;
    const closed = waitClosed(rig);
    rig.publish(topics.telemetry('OV-01'), Buffer.alloc(MAX * 2, 0x61), { qos: 1 });
    await closed;
    expect(eb.counters.oversized).toBe(before + 1);
    await sleep(50);
    expect(got.filter((m) => m.topic === topics.telemetry('OV-01'))).toHaveLength(0);
    // a packet just under the cap still passes on a fresh connection
    const rig2 = track(await rigClient(eb.port, 'OV-01'));
    await rig2.publishAsync(topics.telemetry('OV-01'), Buffer.alloc(MAX - 200, 0x62), { qos: 1 });
    await waitFor(() => got.some((m) => m.topic === topics.telemetry('OV-01')), 2000, 'big-but-allowed message');
  });
});

describe('revocation and last will', () => {
  const will = (rig: string) => ({
    topic: topics.status(rig),
    payload: Buffer.from(JSON.stringify({ v: 1, rig, online: false, ts: new Date().toISOString(), lastSeq: 0 })),
    qos: 1 as const,
    retain: true,
  });

  test('a revoke from the server kicks every client of that rig at once; others stay', async () => {
    const { server, got } = await spy();
    const rigA = track(await rigClient(eb.port, 'OV-01', { will: will('OV-01') }));
    const rigB = track(await rigClient(eb.port, 'OV-02'));
    const closed = waitClosed(rigA, 1000);
    const t0 = Date.now();
    await server.publishAsync(topics.revoke, JSON.stringify({ v: 1, rig: 'OV-01' }), { qos: 1 });
    await closed;
    expect(Date.now() - t0).toBeLessThan(1000);
    expect(rigB.connected).toBe(true);
    expect(eb.counters.revokedKicks).toBeGreaterThanOrEqual(1);
    // the kick looks like a lost rig: its will says offline
    await waitFor(() => got.some((m) => m.topic === topics.status('OV-01')), 2000, 'will after revoke');
  });

  test('only the server may publish a revoke', async () => {
    const rigA = track(await rigClient(eb.port, 'OV-01'));
    const rigB = track(await rigClient(eb.port, 'OV-02'));
    const before = eb.counters.spoofedPublishes;
    const closed = waitClosed(rigA);
    rigA.publish(topics.revoke, JSON.stringify({ v: 1, rig: 'OV-02' }), { qos: 1 });
    await closed;
    expect(eb.counters.spoofedPublishes).toBe(before + 1);
    await sleep(100);
    expect(rigB.connected).toBe(true);
  });

  test("a rig's last will publishes online:false when its socket dies", async () => {
    const { got } = await spy();
    const rig = track(await rigClient(eb.port, 'OV-02', { will: will('OV-02') }));
    await rig.publishAsync(
      topics.status('OV-02'),
      JSON.stringify({ v: 1, rig: 'OV-02', online: true, ts: new Date().toISOString(), lastSeq: 0 }),
      { qos: 1, retain: true },
    );
    rig.stream.destroy(); // no DISCONNECT packet: the broker sees a dead socket
    await waitFor(() => got.some((m) => m.topic === topics.status('OV-02') && m.payload.includes('"online":false')), 3000, 'last will');
    const lastWill = got.filter((m) => m.topic === topics.status('OV-02')).pop()!;
    const parsed = parseStatus(lastWill.payload);
    expect(parsed.ok && parsed.data.online).toBe(false);
    // retained: a late subscriber sees the rig offline
    const late = track(await serverClient(eb.port, 'late-subscriber'));
    const seen: string[] = [];
    late.on('message', (_t, p) => seen.push(p.toString()));
    await late.subscribeAsync(topics.status('OV-02'), { qos: 1 });
    await waitFor(() => seen.length > 0, 2000, 'retained status');
    expect(seen[0]).toContain('"online":false');
  });
});
