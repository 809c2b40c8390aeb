/**
 * MQTT fuzz. First the parsers alone: thousands of malformed telemetry, status, command-ack and
 * command payloads (fields of the wrong type, out of range or missing, temperatures below absolute
 * zero, NaN/Infinity as text, duplicate sockets, unicode, truncated JSON, deep nesting, bytes that
 * are not UTF-8, payloads over the packet cap): every one is rejected with a readable one-line
 * reason and none throws. Then a few hundred through a real broker (createEmberlotBroker) from a
 * rig to a validating subscriber: all arrive, all are rejected with a reason, the broker stays up,
 * a good message still passes, and an oversized packet is refused (connection dropped, counted,
 * never delivered).
 */
import fc from 'fast-check';
import type { MqttClient } from 'mqtt';
import type { ZodType } from 'zod';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import {
  MAX_PACKET_BYTES,
  commandAckSchema,
  commandSchema,
  parseCommand,
  parseCommandAck,
  parseRigTopic,
  parseStatus,
  parseTelemetry,
  statusSchema,
  telemetrySchema,
  topics,
  type ParseResult,
} from '../../shared/mqtt';
import { deepJson, draw, FUZZ_SEED, hostileString, mutatedBody, show, Tally, withPollutionKeys } from '../support/fuzz';
import { endAll, mapAuthenticate, rigClient, serverClient, sleep, waitClosed, waitFor } from './mqtt-test-helpers';

const PARSER_RUNS = Number(process.env.EMBERLOT_FUZZ_MQTT_RUNS ?? 1000);
const BROKER_RUNS = Number(process.env.EMBERLOT_FUZZ_BROKER_RUNS ?? 100);

const tally = new Tally();
afterAll(() => console.log(tally.report(`MQTT fuzz (seed ${FUZZ_SEED})`)));

const telemetry = () => ({
  v: 1,
  rig: 'OV-01',
  seq: 42,
  ts: '2026-03-04T10:00:00.000Z',
  stressClockS: 151200,
  chamberC: 125.02,
  humidityPct: null,
  setpointC: 125,
  sockets: [
    { i: 0, caseC: 131.4, vV: 20, iA: 0.588, biasOn: true, tripped: false },
    { i: 1, caseC: 125.1, vV: 0, iA: 0, biasOn: false, tripped: true },
  ],
});
const status = () => ({ v: 1, rig: 'OV-01', online: true, ts: '2026-03-04T10:00:00Z', firmware: 'hg-bi 2.4.1', lastSeq: 41 });
const ack = () => ({ v: 1, rig: 'OV-01', cmdId: 'cmd-2026-0001', ok: false, error: 'socket 3 interlock open' });
const command = () => ({ v: 1, cmdId: 'cmd-2026-0002', type: 'bias', sockets: [0, 1], on: true, vV: 20, iA: 0.01 });

interface Contract {
  name: 'telemetry' | 'status' | 'command-ack' | 'command';
  schema: ZodType;
  sample: () => unknown;
  parse: (input: string | Uint8Array) => ParseResult<unknown>;
}
const CONTRACTS: Contract[] = [
  { name: 'telemetry', schema: telemetrySchema, sample: telemetry, parse: parseTelemetry },
  { name: 'status', schema: statusSchema, sample: status, parse: parseStatus },
  { name: 'command-ack', schema: commandAckSchema, sample: ack, parse: parseCommandAck },
  { name: 'command', schema: commandSchema, sample: command, parse: parseCommand },
];

/** Physical nonsense the generic mutations may miss: below absolute zero, duplicate sockets, 257 sockets. */
const physicalNonsense = (): fc.Arbitrary<unknown> =>
  fc.oneof(
    fc.double({ min: -1e6, max: -273.151, noNaN: true }).map((t) => ({ ...telemetry(), chamberC: t })),
    fc
      .double({ min: -1e6, max: -273.151, noNaN: true })
      .map((t) => ({ ...telemetry(), sockets: [{ ...telemetry().sockets[0], caseC: t }] })),
    fc.constant({ ...telemetry(), sockets: [telemetry().sockets[0], telemetry().sockets[0]] }),
    fc.constant({ ...telemetry(), sockets: Array.from({ length: 257 }, (_, i) => ({ ...telemetry().sockets[0], i })) }),
    fc.constantFrom('NaN', 'Infinity', '-Infinity', '1e999').map((x) => ({ ...telemetry(), seq: x })),
    fc.constant({ ...telemetry(), seq: 0 }),
    fc.constant({ ...telemetry(), ts: 'yesterday' }),
    fc.constant({ ...telemetry(), v: 2 }),
    fc.constant({ ...telemetry(), rig: 'ov-01' }),
  );

interface Payload {
  kind: string;
  bytes: string | Uint8Array;
}

const malformedPayload = (c: Contract): fc.Arbitrary<Payload> =>
  fc.oneof(
    {
      weight: 8,
      arbitrary: mutatedBody(c.sample(), c.schema).map((b) => ({
        kind: 'wrong types / missing fields / out of range',
        bytes: JSON.stringify(b) ?? 'null',
      })),
    },
    // Telemetry's physical nonsense (the other contracts draw another mutation instead).
    {
      weight: 2,
      arbitrary: (c.name === 'telemetry' ? physicalNonsense() : mutatedBody(c.sample(), c.schema)).map((b) => ({
        kind: c.name === 'telemetry' ? 'physically impossible values' : 'wrong types / missing fields / out of range',
        bytes: JSON.stringify(b) ?? 'null',
      })),
    },
    {
      weight: 2,
      arbitrary: fc
        .tuple(mutatedBody(c.sample(), c.schema), fc.nat(3))
        .map(([b, v]) => ({ kind: 'prototype-pollution keys', bytes: withPollutionKeys(b, v) })),
    },
    {
      weight: 2,
      arbitrary: fc
        .integer({ min: 0, max: JSON.stringify(c.sample()).length - 1 })
        .map((cut) => ({ kind: 'truncated JSON', bytes: JSON.stringify(c.sample()).slice(0, cut) })),
    },
    {
      weight: 1,
      arbitrary: fc
        .integer({ min: 100, max: 20_000 })
        .map((d) => ({ kind: 'deeply nested', bytes: deepJson(d, d % 2 ? 'array' : 'object') })),
    },
    { weight: 2, arbitrary: fc.uint8Array({ minLength: 0, maxLength: 300 }).map((b) => ({ kind: 'binary / not UTF-8', bytes: b })) },
    {
      weight: 2,
      arbitrary: hostileString.map((s) => ({ kind: 'unicode and strings instead of JSON objects', bytes: s })),
    },
    {
      weight: 1,
      arbitrary: fc.constantFrom(MAX_PACKET_BYTES + 1, MAX_PACKET_BYTES * 2).map((n) => ({
        kind: 'over the packet cap',
        bytes: Buffer.from(JSON.stringify({ ...(c.sample() as object), pad: 'x'.repeat(n) })),
      })),
    },
    {
      weight: 1,
      arbitrary: fc.constantFrom('utf16le', 'latin1').map((enc) => ({
        kind: 'binary / not UTF-8',
        bytes: Buffer.from(`\uFEFF${JSON.stringify({ ...(c.sample() as object), note: 'µ°é' })}`, enc as BufferEncoding),
      })),
    },
  );

/** A readable reason: one non-empty line of text, not a dump of the input. */
function reasonProblems(r: ParseResult<unknown>): string[] {
  if (r.ok) return ['accepted'];
  const out: string[] = [];
  if (typeof r.reason !== 'string' || r.reason.trim() === '') out.push('empty reason');
  else {
    if (r.reason.length > 2000) out.push(`reason of ${r.reason.length} characters`);
    if (/[\r\n\u0000]/.test(r.reason)) out.push('reason spans lines or holds NUL');
    if (/\[object Object\]/.test(r.reason)) out.push(`unreadable reason: ${r.reason.slice(0, 120)}`);
  }
  return out;
}

describe('MQTT payload parsers', () => {
  test.each(CONTRACTS.map((c) => [c.name, c] as const))(
    '%s: every malformed payload is rejected with a readable reason, none throws',
    (name, c) => {
      const problems: string[] = [];
      draw(malformedPayload(c), `mqtt ${name}`, PARSER_RUNS).forEach((p, i) => {
        let r: ParseResult<unknown>;
        try {
          r = c.parse(p.bytes);
        } catch (e) {
          problems.push(`#${i} [${p.kind}] threw ${(e as Error).message}: ${show(p.bytes)}`);
          return;
        }
        tally.add(`parser: ${p.kind}`);
        const q = reasonProblems(r);
        if (q.length) problems.push(`#${i} [${p.kind}] ${show(p.bytes)} → ${q.join('; ')}`);
      });
      if (problems.length)
        throw new Error(`${problems.length} problem(s); replay with EMBERLOT_FUZZ_SEED=${FUZZ_SEED}\n${problems.slice(0, 20).join('\n')}`);
    },
  );

  test('the samples the mutations start from are themselves valid (so the mutations are what is refused)', () => {
    for (const c of CONTRACTS) expect(c.parse(JSON.stringify(c.sample()))).toMatchObject({ ok: true });
  });
});

describe('malformed payloads through a real broker', () => {
  let eb: EmberlotBroker;
  const opened: MqttClient[] = [];
  const track = (c: MqttClient) => (opened.push(c), c);
  const MAX = 16 * 1024;

  beforeAll(async () => {
    eb = await createEmberlotBroker({ port: 0, authenticate: mapAuthenticate, maxPacketBytes: MAX });
  });
  afterAll(async () => {
    await endAll(opened.splice(0));
    await eb.close();
  });

  test('a rig publishing hundreds of them: each arrives, each is rejected with a reason, the broker stays up and a good message still passes', async () => {
    const server = track(await serverClient(eb.port, 'fuzz-validator'));
    const verdicts: Array<{ topic: string; kind: string; ok: boolean; reason?: string }> = [];
    server.on('message', (topic, payload) => {
      const parsed = parseRigTopic(topic);
      const r =
        parsed?.kind === 'telemetry'
          ? parseTelemetry(payload)
          : parsed?.kind === 'status'
            ? parseStatus(payload)
            : parsed?.kind === 'command-acks'
              ? parseCommandAck(payload)
              : null;
      verdicts.push({ topic, kind: parsed?.kind ?? '?', ok: !!r?.ok, reason: r && !r.ok ? r.reason : undefined });
    });
    await server.subscribeAsync(topics.all.everything, { qos: 1 });

    const rig = track(await rigClient(eb.port, 'OV-01'));
    const leaves = [
      { topic: topics.telemetry('OV-01'), c: CONTRACTS[0] },
      { topic: topics.status('OV-01'), c: CONTRACTS[1] },
      { topic: topics.commandAcks('OV-01'), c: CONTRACTS[2] },
    ];
    let sent = 0;
    for (const { topic, c } of leaves) {
      // Under the broker's cap here (the cap itself has its own test below).
      const payloads = draw(
        malformedPayload(c).filter((p) => Buffer.byteLength(p.bytes as string) < MAX - 512),
        `broker ${c.name}`,
        BROKER_RUNS,
      );
      for (const p of payloads) {
        await rig.publishAsync(topic, Buffer.from(p.bytes as string), { qos: 1 });
        tally.add(`broker: ${c.name} ${p.kind}`);
        sent++;
      }
    }
    await waitFor(() => verdicts.filter((v) => v.kind !== '?').length >= sent, 15_000, `${sent} messages at the validator`);
    const received = verdicts.filter((v) => v.kind !== '?');
    expect(received).toHaveLength(sent);
    expect(received.filter((v) => v.ok)).toEqual([]);
    expect(received.filter((v) => !v.reason || v.reason.trim() === '')).toEqual([]);

    // Still up: the same connection delivers a good message, which passes.
    expect(rig.connected).toBe(true);
    await rig.publishAsync(topics.telemetry('OV-01'), JSON.stringify({ ...telemetry(), seq: 43 }), { qos: 1 });
    await waitFor(() => verdicts.some((v) => v.kind === 'telemetry' && v.ok), 3000, 'good telemetry after the fuzz');
  }, 60_000);

  test('oversized packets are refused: connection dropped, counted, never delivered; a fresh connection works', async () => {
    const server = track(await serverClient(eb.port, 'fuzz-validator-2'));
    const got: string[] = [];
    server.on('message', (topic) => got.push(topic));
    await server.subscribeAsync(topics.all.telemetry, { qos: 1 });
    for (const size of [MAX + 1, MAX * 4, MAX_PACKET_BYTES * 2]) {
      const rig = track(await rigClient(eb.port, 'OV-02'));
      const before = eb.counters.oversized;
      const closed = waitClosed(rig, 5000);
      rig.publish(topics.telemetry('OV-02'), Buffer.alloc(size, 0x7b), { qos: 1 });
      await closed;
      expect(eb.counters.oversized).toBe(before + 1);
      tally.add('broker: oversized packet');
    }
    await sleep(50);
    expect(got).toEqual([]);
    const rig = track(await rigClient(eb.port, 'OV-02'));
    await rig.publishAsync(topics.telemetry('OV-02'), JSON.stringify({ ...telemetry(), rig: 'OV-02' }), { qos: 1 });
    await waitFor(() => got.length === 1, 3000, 'telemetry on a fresh connection');
  }, 30_000);
});
