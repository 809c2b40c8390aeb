/**
 * Two brokers in Redis mode (broker/redis-mode.ts) on one private Redis (scripts/redis-server.ts):
 * what one broker's clients publish, subscribe, retain or leave queued is seen through the other, and
 * the single broker's rules still hold in this mode — authentication and client ids, the topic ACL,
 * revocation (now across brokers) and the sign-in throttle.
 * Redis port: EMBERLOT_TEST_REDIS_PORT + 1 when set, else a free ephemeral port.
 */
import type { MqttClient } from 'mqtt';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { destroyRedis, startRedis, type RedisOptions } from '../../scripts/redis-server';
import { parseStatus, topics } from '../../shared/mqtt';
import { freePort } from '../support/processes';
import { connectClient, endAll, mapAuthenticate, rigClient, serverClient, waitClosed, waitFor } from './mqtt-test-helpers';

jest.setTimeout(30_000);

let redisOpts: RedisOptions;
let a: EmberlotBroker;
let b: EmberlotBroker;
const opened: MqttClient[] = [];
const track = (c: MqttClient) => (opened.push(c), c);

beforeAll(async () => {
  const fixed = Number(process.env.EMBERLOT_TEST_REDIS_PORT ?? 0);
  const port = fixed > 0 ? fixed + 1 : await freePort();
  redisOpts = { name: `test-brokers-${port}`, port, throwaway: true, quiet: true };
  await destroyRedis(redisOpts);
  const redis = await startRedis(redisOpts);
  const make = () =>
    createEmberlotBroker({
      port: 0,
      authenticate: mapAuthenticate,
      redis: { url: redis.url, heartbeatIntervalMs: 500 },
      log: process.env.BROKER_LOG ? (l) => console.log(l) : undefined,
    });
  [a, b] = await Promise.all([make(), make()]);
}, 30_000);

afterEach(async () => {
  await endAll(opened.splice(0));
});

afterAll(async () => {
  await Promise.all([a?.close(), b?.close()]);
  await destroyRedis(redisOpts);
});

function collect(client: MqttClient) {
  const got: { topic: string; payload: string; retain: boolean }[] = [];
  client.on('message', (topic, payload, packet) => got.push({ topic, payload: payload.toString(), retain: packet.retain }));
  return got;
}

test("a rig's telemetry on broker A reaches the server on broker B; the server's command on B reaches the rig on A", async () => {
  const server = track(await serverClient(b.port, 'emberlot-server-b'));
  const toServer = collect(server);
  await server.subscribeAsync(topics.all.telemetry, { qos: 1 });
  const rig = track(await rigClient(a.port, 'OV-01'));
  const toRig = collect(rig);
  await rig.subscribeAsync(topics.commands('OV-01'), { qos: 1 });
  // Each SUBACK follows the broker's Redis SUBSCRIBE reply: both subscriptions are live now.
  await rig.publishAsync(topics.telemetry('OV-01'), 'sample-1', { qos: 1 });
  await server.publishAsync(topics.commands('OV-01'), 'command-1', { qos: 1 });
  await waitFor(() => toServer.length === 1 && toRig.length === 1, 5000, 'both messages across brokers');
  expect(toServer).toEqual([{ topic: topics.telemetry('OV-01'), payload: 'sample-1', retain: false }]);
  expect(toRig).toEqual([{ topic: topics.commands('OV-01'), payload: 'command-1', retain: false }]);
});

test('a retained status published through A is replayed to a subscriber that arrives later on B', async () => {
  const rig = track(await rigClient(a.port, 'OV-02'));
  const status = { v: 1, rig: 'OV-02', online: true, ts: new Date().toISOString(), lastSeq: 7 };
  await rig.publishAsync(topics.status('OV-02'), JSON.stringify(status), { qos: 1, retain: true });
  const server = track(await serverClient(b.port, 'emberlot-server-late'));
  const got = collect(server);
  await server.subscribeAsync(topics.status('OV-02'), { qos: 1 });
  await waitFor(() => got.length === 1, 5000, 'retained status on B');
  expect(got[0].retain).toBe(true);
  const parsed = parseStatus(got[0].payload);
  expect(parsed.ok && parsed.data.lastSeq).toBe(7);
});

/**
 * Publishes a marker to the rig's command topic and waits for it: QoS 1 messages to one session
 * arrive in order, so once the marker is in, any second copy of what came before it would be too.
 */
async function settle(server: MqttClient, got: { payload: string }[], rigCode: string, marker: string): Promise<void> {
  await server.publishAsync(topics.commands(rigCode), marker, { qos: 1 });
  await waitFor(() => got.some((m) => m.payload === marker), 10_000, `marker ${marker}`);
}

test('a QoS 1 command queued for an offline persistent session while it moves from A to B is delivered once on B', async () => {
  const first = await rigClient(a.port, 'OV-01', { clean: false });
  await first.subscribeAsync(topics.commands('OV-01'), { qos: 1 });
  await first.endAsync();
  const server = track(await serverClient(b.port, 'emberlot-server-q'));
  // aedes sends the PUBACK before it queues and emits the message, so this publish may still be
  // on its way while the rig reconnects below (connack-first.ts covers that window).
  await server.publishAsync(topics.commands('OV-01'), 'while-away', { qos: 1 });
  let got: ReturnType<typeof collect> = [];
  const again = track(await rigClient(b.port, 'OV-01', { clean: false }, (c) => (got = collect(c))));
  await waitFor(() => got.length >= 1, 10_000, 'queued command on B');
  await settle(server, got, 'OV-01', 'marker-q');
  expect(got.map((m) => m.payload)).toEqual(['while-away', 'marker-q']);
  // Leave no session behind for the other tests.
  await again.endAsync();
  track(await rigClient(b.port, 'OV-01', { clean: true }));
});

test('a command published while a persistent session is being restored reaches the rig after its CONNACK, once (MQTT 3.1.1 [MQTT-3.2.0-1])', async () => {
  const first = await rigClient(a.port, 'OV-02', { clean: false });
  await first.subscribeAsync(topics.commands('OV-02'), { qos: 1 });
  await first.endAsync();
  const server = track(await serverClient(a.port, 'emberlot-server-window'));

  // Stop B's connect of rig-OV-02 between restoring its subscription and writing the CONNACK (aedes
  // deletes the old will there: a slow Redis reply on a busy machine), publish, then let it go on.
  const persistence = (b.broker as unknown as { persistence: { delWill(c: { id: string }): Promise<unknown> } }).persistence;
  const delWill = persistence.delWill.bind(persistence);
  let windowOpen!: () => void;
  const inWindow = new Promise<void>((r) => (windowOpen = r));
  let letGo!: () => void;
  const goOn = new Promise<void>((r) => (letGo = r));
  persistence.delWill = async (c) => {
    if (c.id !== 'rig-OV-02') return delWill(c);
    persistence.delWill = delWill;
    windowOpen();
    await goOn;
    return delWill(c);
  };
  // An in-process listener on B sees the command in the same emit as the rig's restored subscription.
  let reachedB = false;
  const onB = (_p: unknown, cb: () => void) => ((reachedB = true), cb());
  await new Promise<void>((r) => b.broker.subscribe(topics.commands('OV-02'), onB, r));

  const cmds: string[] = [];
  let got: ReturnType<typeof collect> = [];
  const connecting = rigClient(b.port, 'OV-02', { clean: false }, (c) => {
    got = collect(c);
    c.on('packetreceive', (p) => cmds.push(p.cmd));
  });
  try {
    await inWindow;
    const heldBefore = b.counters.heldBeforeConnack;
    await server.publishAsync(topics.commands('OV-02'), 'while-connecting', { qos: 1 });
    await waitFor(() => reachedB, 10_000, 'the command on B');
    await new Promise((r) => setImmediate(r)); // aedes writes a live delivery on the next turn
    expect(b.counters.heldBeforeConnack).toBe(heldBefore + 1);
  } finally {
    letGo();
    b.broker.unsubscribe(topics.commands('OV-02'), onB, () => undefined);
  }
  const again = track(await connecting);
  await waitFor(() => got.length >= 1, 10_000, 'the command after the CONNACK');
  await settle(server, got, 'OV-02', 'marker-window');
  expect(cmds[0]).toBe('connack');
  expect(got.map((m) => m.payload)).toEqual(['while-connecting', 'marker-window']);
  await again.endAsync();
  track(await rigClient(b.port, 'OV-02', { clean: true }));
});

test('the topic rules hold on both brokers: a rig cannot publish as another rig or subscribe to its commands', async () => {
  for (const eb of [a, b]) {
    const before = { spoofed: eb.counters.spoofedPublishes, refused: eb.counters.refusedSubscriptions };
    const rig = track(await rigClient(eb.port, 'OV-01'));
    await expect(rig.subscribeAsync(topics.commands('OV-02'), { qos: 1 })).rejects.toBeTruthy();
    rig.publish(topics.telemetry('OV-02'), 'spoof', { qos: 1 });
    await waitClosed(rig);
    expect(eb.counters.spoofedPublishes).toBe(before.spoofed + 1);
    expect(eb.counters.refusedSubscriptions).toBe(before.refused + 1);
  }
});

test('bad credentials and a foreign client id are refused in Redis mode', async () => {
  await expect(connectClient(b.port, { clientId: 'rig-OV-01', username: 'rig-OV-01', password: 'guess' })).rejects.toMatchObject({
    code: 4,
  });
  await expect(connectClient(b.port, { clientId: 'rig-OV-02', username: 'rig-OV-01', password: 'ov01-secret' })).rejects.toMatchObject({
    code: 2,
  });
});

test('a revocation published by the server through A disconnects the rig connected to B', async () => {
  const rig = track(await rigClient(b.port, 'OV-02'));
  const server = track(await serverClient(a.port, 'emberlot-server-revoke'));
  const before = b.counters.revokedKicks;
  await server.publishAsync(topics.revoke, JSON.stringify({ v: 1, rig: 'OV-02' }), { qos: 1 });
  await waitClosed(rig, 5000);
  expect(b.counters.revokedKicks).toBe(before + 1);
});

test('the sign-in throttle still locks a user name after 5 failures (shared by the brokers: cluster-sign-in-throttle.test.ts)', async () => {
  const before = a.counters.throttledConnects;
  for (let k = 0; k < 5; k++) {
    await expect(connectClient(a.port, { clientId: 'rig-OV-02', username: 'rig-OV-02', password: `guess-${k}` })).rejects.toMatchObject({
      code: 4,
    });
  }
  await expect(connectClient(a.port, { clientId: 'rig-OV-02', username: 'rig-OV-02', password: 'guess-6' })).rejects.toMatchObject({
    code: 5,
  });
  expect(a.counters.throttledConnects).toBe(before + 1);
});
