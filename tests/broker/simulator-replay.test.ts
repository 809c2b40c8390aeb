/**
 * End to end over a real broker: a simulated rig keeps every sample until a test "server"
 * confirms it with `stored`; the broker is stopped mid-run and restarted on the same port, and
 * the subscriber must end with the full contiguous seq range while the rig's outbox drains.
 */
import type { MqttClient } from 'mqtt';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { startRig, type RigHandle } from '../../rig-simulator';
import { buildStoredCommands, parseCommandAck, parseStatus, parseTelemetry, topics } from '../../shared/mqtt';
import { CREDS, connectClient, mapAuthenticate, sleep, waitFor } from './mqtt-test-helpers';

jest.setTimeout(20_000);

const RIG = 'OV-01';
const SAMPLES = 80;
let eb: EmberlotBroker | null = null;
let port = 0;
let rig: RigHandle | null = null;
let server: MqttClient | null = null;

const received: number[] = [];
const toConfirm = new Set<number>();
const acks: { cmdId: string; ok: boolean; error?: string }[] = [];
const statuses: boolean[] = [];
const rejected: string[] = [];
let confirmTimer: ReturnType<typeof setInterval> | null = null;
let cmdCounter = 0;

beforeAll(async () => {
  eb = await createEmberlotBroker({ port: 0, authenticate: mapAuthenticate });
  port = eb.port;
  // The test "server": clean session, auto-reconnect, resubscribes after the broker restart.
  server = await connectClient(port, {
    clientId: 'emberlot-server-replay',
    username: 'emberlot-server',
    password: 'server-secret',
    reconnectPeriod: 150,
  });
  server.on('message', (topic, payload) => {
    if (topic === topics.telemetry(RIG)) {
      const t = parseTelemetry(payload);
      if (!t.ok) return void rejected.push(t.reason);
      received.push(t.data.seq);
      toConfirm.add(t.data.seq); // duplicates are confirmed again: a lost `stored` must not strand a sample
    } else if (topic === topics.commandAcks(RIG)) {
      const a = parseCommandAck(payload);
      if (a.ok) acks.push(a.data);
    } else if (topic === topics.status(RIG)) {
      const s = parseStatus(payload);
      if (s.ok) statuses.push(s.data.online);
    }
  });
  await server.subscribeAsync([topics.telemetry(RIG), topics.commandAcks(RIG), topics.status(RIG)], { qos: 1 });
  // Commit-and-confirm loop, as the real server does after its COPY.
  confirmTimer = setInterval(() => {
    if (!server?.connected || toConfirm.size === 0) return;
    const seqs = Array.from(toConfirm);
    toConfirm.clear();
    for (const cmd of buildStoredCommands(seqs, () => `stored-${++cmdCounter}`)) {
      server.publish(topics.commands(RIG), JSON.stringify(cmd), { qos: 1 });
    }
  }, 100);
});

afterAll(async () => {
  if (confirmTimer) clearInterval(confirmTimer);
  await rig?.stop();
  await server?.endAsync(true).catch(() => undefined);
  await eb?.close();
});

test('a broker outage mid-run loses nothing: full contiguous seq range, outbox empty', async () => {
  rig = startRig({
    rigCode: RIG,
    brokerUrl: `mqtt://127.0.0.1:${port}`,
    username: `rig-${RIG}`,
    password: CREDS[`rig-${RIG}`].password,
    sockets: 4,
    chamberC: 100,
    biasOn: true,
    samplePeriodWallS: 0.05,
    maxSamples: SAMPLES,
    resendAfterWallS: 0.5,
    reconnectWallS: 0.15,
    firmware: 'hpd-sim test',
  });
  await waitFor(() => received.length >= 20, 5000, '20 samples before the outage');

  await eb!.close(); // broker gone: QoS 1 in flight and everything sampled meanwhile must survive
  eb = null;
  await sleep(600);
  expect(rig.outbox.size).toBeGreaterThan(0);
  eb = await createEmberlotBroker({ port, authenticate: mapAuthenticate });

  await rig.drained(15_000);
  const unique = Array.from(new Set(received)).sort((a, b) => a - b);
  expect(unique).toEqual(Array.from({ length: SAMPLES }, (_, k) => k + 1));
  expect(rig.outbox.size).toBe(0);
  expect(rig.stats.outboxOverflow).toBe(0);
  expect(rig.stats.connects).toBeGreaterThanOrEqual(2);
  expect(rig.stats.resent).toBeGreaterThan(0);
  expect(rejected).toEqual([]);
});

test('commands are applied once per cmdId and acknowledged; a bad command gets a readable refusal', async () => {
  const send = (body: unknown) => server!.publishAsync(topics.commands(RIG), JSON.stringify(body), { qos: 1 });
  const applied = rig!.stats.commandsApplied;
  const bias = { v: 1, cmdId: 'bias-7f3a', type: 'bias', sockets: [2], on: false };
  await send(bias);
  await send(bias); // redelivery: acknowledged again, not applied twice
  await send({ v: 1, cmdId: 'sp-oops', type: 'setpoint', setpointC: 'hot' });
  await send({ v: 1, cmdId: 'sp-too-hot', type: 'setpoint', setpointC: 400 });
  await waitFor(() => acks.length >= 4, 3000, 'four acks');
  expect(acks.filter((a) => a.cmdId === 'bias-7f3a')).toEqual([
    { v: 1, rig: RIG, cmdId: 'bias-7f3a', ok: true },
    { v: 1, rig: RIG, cmdId: 'bias-7f3a', ok: true },
  ]);
  expect(rig!.stats.commandsApplied).toBe(applied + 1);
  expect(rig!.state().sockets[2].biasOn).toBe(false);
  expect(rig!.state().sockets[1].biasOn).toBe(true);
  const bad = acks.find((a) => a.cmdId === 'sp-oops')!;
  expect(bad.ok).toBe(false);
  expect(bad.error).toMatch(/^invalid command: setpointC: /);
  expect(acks.find((a) => a.cmdId === 'sp-too-hot')).toMatchObject({
    ok: false,
    error: "setpoint 400 °C is above this rig's maximum of 250 °C",
  });
});

test('a rig that drops off is reported offline by its will, then comes back online', async () => {
  statuses.length = 0;
  rig!.dropFor(300);
  await waitFor(() => statuses.includes(false), 3000, 'offline status from the will');
  await waitFor(() => statuses.lastIndexOf(true) > statuses.indexOf(false), 3000, 'online again');
  expect(rig!.connected).toBe(true);
});
