/**
 * The sign-in throttle shared by brokers in Redis mode (broker/shared-sign-in-throttle.ts): failed
 * MQTT sign-ins counted in the brokers' Redis, so 5 wrong guesses for a name lock it on every broker
 * (with per-broker counting a guesser got 5 per broker). Two real aedes brokers on one private Redis
 * (scripts/redis-server.ts), mqtt.js clients on loopback; and the fallback when Redis does not answer.
 * Also one regression of Redis mode on the same brokers: a persistent session subscribing to several
 * topics in one packet (broker/redis-mode.ts `joinRepeatedSubscriptionStores`).
 * Redis port: EMBERLOT_TEST_REDIS_PORT + 2 when set, else a free ephemeral port.
 */
import Redis from 'ioredis';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { SharedSignInThrottle } from '../../broker/shared-sign-in-throttle';
import { destroyRedis, startRedis, type RedisInfo, type RedisOptions } from '../../scripts/redis-server';
import { freePort } from '../support/processes';
import { topics } from '../../shared/mqtt';
import { CREDS, connectClient, mapAuthenticate } from './mqtt-test-helpers';

jest.setTimeout(60_000);

let redisOpts: RedisOptions;
let redis: RedisInfo;
let a: EmberlotBroker;
let b: EmberlotBroker;
const logs: string[] = [];

/** The product's limits (5 per name); only the first lock is longer, so a loaded machine cannot outlast it between two attempts. */
const THROTTLE = { baseLockMs: 30_000 };

beforeAll(async () => {
  const fixed = Number(process.env.EMBERLOT_TEST_REDIS_PORT ?? 0);
  const port = fixed > 0 ? fixed + 2 : await freePort();
  redisOpts = { name: `test-throttle-${port}`, port, throwaway: true, quiet: true };
  await destroyRedis(redisOpts);
  redis = await startRedis(redisOpts);
  const make = (name: string) =>
    createEmberlotBroker({
      port: 0,
      authenticate: mapAuthenticate,
      redis: { url: redis.url, heartbeatIntervalMs: 500 },
      signInThrottle: THROTTLE,
      log: (l) => logs.push(`${name}: ${l}`),
    });
  [a, b] = await Promise.all([make('A'), make('B')]);
}, 60_000);

afterAll(async () => {
  await Promise.all([a?.close(), b?.close()]);
  await destroyRedis(redisOpts);
});

const guess = (eb: EmberlotBroker, rig: string, password: string) =>
  connectClient(eb.port, { clientId: `rig-${rig}`, username: `rig-${rig}`, password });

test('5 wrong guesses split over brokers A (3) and B (2) lock the user name on both (CONNACK 5), and its right secret too', async () => {
  const before = { a: a.counters.throttledConnects, b: b.counters.throttledConnects };
  for (const [eb, k] of [
    [a, 1],
    [b, 2],
    [a, 3],
    [b, 4],
    [a, 5],
  ] as const) {
    await expect(guess(eb, 'OV-01', `guess-${k}`)).rejects.toMatchObject({ code: 4 });
  }
  // Per-broker counting would still let A (3 failures) and B (2) check a guess.
  await expect(guess(a, 'OV-01', 'guess-6')).rejects.toMatchObject({ code: 5 });
  await expect(guess(b, 'OV-01', 'guess-7')).rejects.toMatchObject({ code: 5 });
  // The right secret, never accepted by these brokers before, waits out the lock like any guess.
  await expect(guess(b, 'OV-01', CREDS['rig-OV-01'].password)).rejects.toMatchObject({ code: 5 });
  expect(a.counters.throttledConnects).toBe(before.a + 1);
  expect(b.counters.throttledConnects).toBe(before.b + 2);
  expect(a.counters.authFailures + b.counters.authFailures).toBeGreaterThanOrEqual(5);
  expect(logs.filter((l) => /too many failed sign-ins for user "rig-OV-01"/.test(l))).toHaveLength(3);

  // The counts live under the namespace, and expire (nothing kept for ever).
  const r = new Redis(redis.url);
  try {
    const keys = await r.keys('emberlot:mqtt:signin:*');
    const hashes = keys.filter((k) => !k.endsWith(':flight'));
    expect(hashes).toHaveLength(2); // the name and the address
    for (const k of hashes) expect(await r.pttl(k)).toBeGreaterThan(0);
    const failures = await Promise.all(hashes.map((k) => r.hget(k, 'failures')));
    expect(failures.sort()).toEqual(['5', '5']);
  } finally {
    r.disconnect();
  }
});

test("a real success on one broker clears the name's failures on the other", async () => {
  for (let k = 0; k < 4; k++) await expect(guess(a, 'OV-02', `wrong-${k}`)).rejects.toMatchObject({ code: 4 });
  const rig = await guess(b, 'OV-02', CREDS['rig-OV-02'].password);
  await rig.endAsync(true);
  // 4 failures again (5 without the reset would lock the name at the first of these).
  for (let k = 0; k < 4; k++) await expect(guess(a, 'OV-02', `again-${k}`)).rejects.toMatchObject({ code: 4 });
});

test('Redis not answering: each broker counts alone — the right secret gets in, 5 wrong guesses still lock the name here', async () => {
  const deadPort = await freePort(); // nothing listens there
  const lines: string[] = [];
  const t = new SharedSignInThrottle({ url: `redis://127.0.0.1:${deadPort}`, redisTimeoutMs: 300, baseLockMs: 30_000 }, (l) =>
    lines.push(l),
  );
  try {
    const right = await t.begin('rig-OV-01', 'right', '10.0.0.5');
    expect(right.ok).toBe(true);
    if (right.ok) right.done(true);
    for (let k = 0; k < 5; k++) {
      const v = await t.begin('rig-OV-02', `wrong-${k}`, '10.0.0.6');
      expect(v.ok).toBe(true);
      if (v.ok) v.done(false);
    }
    const sixth = await t.begin('rig-OV-02', 'wrong-6', '10.0.0.6');
    expect(sixth).toMatchObject({ ok: false, key: 'name' });
    // Another rig's right secret is not held up by the locked name.
    expect((await t.begin('rig-OV-03', 'right', '10.0.0.7')).ok).toBe(true);
    expect(t.fallbacks).toBeGreaterThanOrEqual(7);
    expect(lines.filter((l) => /redis sign-in throttle: no answer/.test(l))).toHaveLength(1);
  } finally {
    await t.close();
  }
});

test('Redis mode: a persistent session subscribing to four topics in one packet gets its SUBACK (the leader ingest never did)', async () => {
  const c = await connectClient(a.port, {
    clientId: 'emberlot-ingest-test',
    username: 'emberlot-server',
    password: CREDS['emberlot-server'].password,
    clean: false,
  });
  try {
    const subs = {
      [topics.all.telemetry]: { qos: 1 as const },
      [topics.all.status]: { qos: 1 as const },
      [topics.all.commandAcks]: { qos: 1 as const },
      [topics.all.chamber]: { qos: 1 as const },
    };
    const granted = await Promise.race([c.subscribeAsync(subs), new Promise<'no SUBACK'>((r) => setTimeout(() => r('no SUBACK'), 10_000))]);
    expect(granted).toEqual(Object.keys(subs).map((topic) => ({ topic, qos: 1 })));
    // Stored for the session: a rig's telemetry through B reaches it.
    const got: string[] = [];
    c.on('message', (_t, payload) => got.push(payload.toString()));
    const rig = await connectClient(b.port, { clientId: 'rig-OV-02', username: 'rig-OV-02', password: CREDS['rig-OV-02'].password });
    await rig.publishAsync(topics.telemetry('OV-02'), 'sample', { qos: 1 });
    await rig.endAsync(true);
    const deadline = Date.now() + 5_000;
    while (!got.length && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
    expect(got).toEqual(['sample']);
  } finally {
    await c.endAsync(true);
  }
});
