/** The v1 MQTT contracts in shared/mqtt: topics, payload validation, readable refusals. */
import { PacketSizeGuard } from '../../broker/packet-guard';
import { mayPublish, maySubscribe } from '../../broker/broker';
import {
  MAX_PACKET_BYTES,
  buildStoredCommands,
  isPlainTelemetry,
  isPlainTelemetryColumns,
  isRigClientIdFor,
  parseCommand,
  parsePayload,
  parseRigTopic,
  parseTelemetry,
  rigCodeFromTopic,
  seqInRanges,
  telemetryColumnsSchema,
  telemetryColumnsText,
  telemetryFromReadings,
  telemetrySchema,
  topics,
  type ParseResult,
  type Telemetry,
  type TelemetryReadings,
} from '../../shared/mqtt';
import { mulberry32 } from '../../shared/random';

/** zod's verdict on a v1 text, in the form receivers handle (columns). */
const v1Reference = (text: string): ParseResult<Telemetry> => {
  const r = parsePayload(telemetrySchema, text);
  return r.ok ? { ok: true, data: telemetryFromReadings(r.data) } : r;
};

const good = (): TelemetryReadings => ({
  v: 1,
  rig: 'OV-01',
  seq: 42,
  ts: '2025-03-04T10:00:00.000Z',
  stressClockS: 151200,
  chamberC: 125.02,
  humidityPct: null,
  setpointC: 125,
  sockets: [
    { i: 0, caseC: 131.4, vV: 20, iA: 0.588, biasOn: true, tripped: false },
    { i: 1, caseC: 125.1, vV: 0, iA: 0, biasOn: false, tripped: true },
  ],
});

describe('topics', () => {
  test('builders and parsers round-trip', () => {
    expect(topics.telemetry('OV-01')).toBe('emberlot/v1/rigs/OV-01/telemetry');
    expect(parseRigTopic('emberlot/v1/rigs/OV-01/command-acks')).toEqual({ rigCode: 'OV-01', kind: 'command-acks' });
    expect(rigCodeFromTopic(topics.status('HPD-RIG-7'))).toBe('HPD-RIG-7');
    for (const t of [
      'emberlot/v2/rigs/OV-01/telemetry',
      'emberlot/v1/rigs/ov-01/telemetry',
      'emberlot/v1/rigs/OV-01/other',
      'emberlot/v1/rigs/OV-01/telemetry/x',
    ]) {
      expect(parseRigTopic(t)).toBeNull();
    }
    expect(() => topics.telemetry('OV/01')).toThrow('Invalid rig code');
    expect(() => topics.telemetry('#')).toThrow('Invalid rig code');
  });

  test('client ids cannot be confused between rigs', () => {
    expect(isRigClientIdFor('rig-OV-01', 'OV-01')).toBe(true);
    expect(isRigClientIdFor('rig-OV-01.bench', 'OV-01')).toBe(true);
    expect(isRigClientIdFor('rig-OV-01-2', 'OV-01')).toBe(false);
  });

  test('authorisation rules', () => {
    const rig = { kind: 'rig' as const, rigCode: 'OV-01' };
    expect(mayPublish(rig, topics.telemetry('OV-01'))).toBe(true);
    expect(mayPublish(rig, topics.commands('OV-01'))).toBe(false);
    expect(mayPublish(rig, topics.telemetry('OV-02'))).toBe(false);
    expect(mayPublish(rig, topics.revoke)).toBe(false);
    expect(maySubscribe(rig, topics.commands('OV-01'))).toBe(true);
    expect(maySubscribe(rig, 'emberlot/v1/rigs/+/commands')).toBe(false);
    expect(mayPublish({ kind: 'server' }, topics.revoke)).toBe(true);
    expect(maySubscribe({ kind: 'server' }, '#')).toBe(false);
    expect(mayPublish(undefined, topics.telemetry('OV-01'))).toBe(false);
  });
});

describe('telemetry validation', () => {
  test('a good message passes, from a Buffer or a string', () => {
    expect(parseTelemetry(Buffer.from(JSON.stringify(good())))).toEqual({ ok: true, data: telemetryFromReadings(good()) });
    expect(parseTelemetry(JSON.stringify(good())).ok).toBe(true);
  });

  test.each([
    ['not JSON', 'nope{', 'payload is not valid JSON'],
    [
      'implausible case temperature',
      { ...good(), sockets: [{ ...good().sockets[0], caseC: 900 }] },
      'sockets.0.caseC: Too big: expected number to be <=500',
    ],
    ['below absolute zero', { ...good(), chamberC: -300 }, 'chamberC: Too small: expected number to be >=-273.15'],
    ['duplicate socket', { ...good(), sockets: [good().sockets[0], good().sockets[0]] }, 'sockets.1.i: socket index 0 appears twice'],
    ['seq not an integer', { ...good(), seq: 1.5 }, 'seq: Invalid input: expected int, received number'],
    ['bad rig code', { ...good(), rig: 'ov 1' }, 'rig: Rig code must be 2–32 of A–Z, 0–9, "-"'],
    ['unknown version', { ...good(), v: 3 }, 'v: Invalid input: expected 1'],
  ])('%s is refused with a readable reason', (_label, body, reason) => {
    const r = parseTelemetry(typeof body === 'string' ? body : JSON.stringify(body));
    expect(r).toEqual({ ok: false, reason });
  });

  test('more than 256 sockets is refused; so is a payload over the packet cap', () => {
    const many = { ...good(), sockets: Array.from({ length: 257 }, (_, i) => ({ ...good().sockets[0], i: i % 256 })) };
    expect(parseTelemetry(JSON.stringify(many)).ok).toBe(false);
    expect(parseTelemetry('x'.repeat(MAX_PACKET_BYTES + 1))).toEqual({
      ok: false,
      reason: `payload larger than ${MAX_PACKET_BYTES} bytes`,
    });
  });
});

/**
 * parseTelemetry skips zod for messages that carry exactly the schema's keys (isPlainTelemetry).
 * The reference is zod itself: parsePayload(telemetrySchema, …). For valid messages and for
 * thousands of one- and two-field mutations of them, both must give the same result, and the fast
 * path may accept only what zod accepts unchanged.
 */
describe('telemetry fast path agrees with the zod schema', () => {
  const rnd = mulberry32(20261202);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const wild: unknown[] = [
    0,
    -0,
    1,
    -1,
    1.5,
    255,
    256,
    -273.15,
    -273.16,
    500,
    500.01,
    1e12,
    1e12 + 1,
    1e4,
    -1e4,
    10_000.5,
    1000,
    -1000.5,
    100,
    100.1,
    Number.MAX_SAFE_INTEGER,
    Number.MAX_SAFE_INTEGER + 2,
    1e300,
    null,
    true,
    false,
    '',
    '1',
    'OV-01',
    'ov-01',
    'A',
    'X'.repeat(33),
    '2025-03-04T10:00:00Z',
    '2025-03-04T10:00:00+02:00',
    '2025-03-04 10:00:00',
    '2025-13-04T10:00:00Z',
    [],
    {},
    [1],
    { i: 0 },
  ];
  const validMessage = (): TelemetryReadings => {
    const n = 1 + Math.floor(rnd() * 8);
    const first = Math.floor(rnd() * (256 - n));
    return {
      v: 1,
      rig: pick(['OV-01', 'HPD-RIG-7', 'B9']),
      seq: 1 + Math.floor(rnd() * 1e6),
      ts: pick(['2025-03-04T10:00:00.000Z', '2026-12-02T03:00:00+01:00', '2026-01-01T00:00:00Z']),
      stressClockS: rnd() * 1e6,
      chamberC: -40 + rnd() * 240,
      humidityPct: rnd() < 0.5 ? null : rnd() * 100,
      setpointC: 125,
      sockets: Array.from({ length: n }, (_, k) => ({
        i: first + k,
        caseC: -40 + rnd() * 300,
        vV: (rnd() - 0.5) * 2000,
        iA: (rnd() - 0.5) * 10,
        biasOn: rnd() < 0.5,
        tripped: rnd() < 0.1,
      })),
    };
  };
  /** One change at the top level or in one socket: a wild value, a deleted key, an extra key. */
  const mutate = (m: Record<string, unknown>): void => {
    const sockets = Array.isArray(m.sockets)
      ? (m.sockets as unknown[]).filter((x): x is Record<string, unknown> => typeof x === 'object' && x !== null && !Array.isArray(x))
      : [];
    const target: Record<string, unknown> = rnd() < 0.5 || !sockets.length ? m : pick(sockets);
    const r = rnd();
    if (r < 0.7) target[pick(Object.keys(target))] = pick(wild);
    else if (r < 0.8) delete target[pick(Object.keys(target))];
    else if (r < 0.9) target[pick(['extra', 'note', '__proto__'])] = 1;
    else if (sockets.length) (m.sockets as unknown[]).push({ ...pick(sockets) }); // a repeated socket index
  };

  test('valid messages take the fast path and equal what zod returns', () => {
    for (let k = 0; k < 500; k++) {
      const text = JSON.stringify(validMessage());
      expect(isPlainTelemetry(JSON.parse(text))).toBe(true);
      expect(parseTelemetry(text)).toEqual(v1Reference(text));
    }
  });

  test('mutated messages: same verdict and reason as zod; the fast path accepts only what zod keeps unchanged', () => {
    let refused = 0;
    let fast = 0;
    let stripped = 0;
    for (let k = 0; k < 4000; k++) {
      const m = JSON.parse(JSON.stringify(validMessage())) as Record<string, unknown>;
      mutate(m);
      if (rnd() < 0.3) mutate(m);
      // Through JSON text, as from the wire (so `__proto__` is an own key, as JSON.parse makes it).
      const text = JSON.stringify(m).replace('"extra"', rnd() < 0.5 ? '"__proto__"' : '"extra"');
      const json = JSON.parse(text);
      const reference = telemetrySchema.safeParse(json);
      if (isPlainTelemetry(json)) {
        fast++;
        expect(reference.success).toBe(true);
        expect(reference.data).toEqual(json);
      }
      const ours = parseTelemetry(text);
      expect(ours).toEqual(v1Reference(text));
      if (!ours.ok) refused++;
      else if (!isPlainTelemetry(JSON.parse(text))) stripped++;
    }
    // The mutations reach every branch: refusals, fast acceptances and zod-only acceptances.
    expect(refused).toBeGreaterThan(2000);
    expect(fast).toBeGreaterThan(100);
    expect(stripped).toBeGreaterThan(20);
  });
});

/**
 * Telemetry in column form (v2). The reference is the object form (v1) of the same content, parsed
 * by the v1 schema: a column message must land as exactly that (with `v: 2`), and the column
 * fast path must agree with zod's telemetryColumnsSchema as the v1 fast path does with v1's.
 */
describe('telemetry in column form', () => {
  const columns = (t: TelemetryReadings) => JSON.parse(telemetryColumnsText(t)) as Record<string, unknown>;

  test('lands as the object form of the same content does; both forms round-trip', () => {
    const text = telemetryColumnsText(good());
    expect(JSON.parse(text)).toEqual({
      v: 2,
      rig: 'OV-01',
      seq: 42,
      ts: '2025-03-04T10:00:00.000Z',
      stressClockS: 151200,
      chamberC: 125.02,
      humidityPct: null,
      setpointC: 125,
      socket: [0, 1],
      caseC: [131.4, 125.1],
      vV: [20, 0],
      iA: [0.588, 0],
      flags: [1, 2],
    });
    expect(parseTelemetry(Buffer.from(text))).toEqual({ ok: true, data: telemetryFromReadings({ ...good(), v: 2 }) });
    expect(parseTelemetry(JSON.stringify(good()))).toEqual({ ok: true, data: telemetryFromReadings(good()) });
    const parsed = parseTelemetry(text);
    if (!parsed.ok) throw new Error(parsed.reason);
    expect(telemetryColumnsText(parsed.data)).toBe(text);
    // A v1 message of 64 sockets against its column form: well under half the bytes.
    const big = {
      ...good(),
      sockets: Array.from({ length: 64 }, (_, i) => ({ i, caseC: 95.37, vV: 20, iA: 0.29871, biasOn: true, tripped: false })),
    };
    expect(telemetryColumnsText(big).length).toBeLessThan(0.45 * JSON.stringify(big).length);
  });

  test.each([
    ['a column shorter than the sockets', (c: Record<string, unknown>) => (c.iA = [0.5]), 'iA: 1 values for 2 sockets'],
    ['a missing column', (c: Record<string, unknown>) => delete c.flags, 'flags: Invalid input: expected array, received undefined'],
    ['a repeated socket index', (c: Record<string, unknown>) => (c.socket = [3, 3]), 'socket.1: socket index 3 appears twice'],
    ['flags out of range', (c: Record<string, unknown>) => (c.flags = [1, 4]), 'flags.1: Too big: expected number to be <=3'],
    [
      'an implausible case temperature',
      (c: Record<string, unknown>) => (c.caseC = [131.4, 900]),
      'caseC.1: Too big: expected number to be <=500',
    ],
    [
      'no sockets',
      (c: Record<string, unknown>) => Object.assign(c, { socket: [], caseC: [], vV: [], iA: [], flags: [] }),
      'socket: Too small: expected array to have >=1 items',
    ],
  ])('%s is refused with a readable reason', (_label, change, reason) => {
    const c = columns(good());
    change(c);
    expect(parseTelemetry(JSON.stringify(c))).toEqual({ ok: false, reason });
  });

  test('mutated column messages: same verdict and reason as zod; the fast path accepts only what zod keeps unchanged', () => {
    const rnd = mulberry32(20261203);
    const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
    const wild: unknown[] = [
      0,
      1,
      2,
      3,
      4,
      -1,
      1.5,
      255,
      256,
      -273.16,
      500.01,
      1e4,
      -1e4,
      1000.5,
      null,
      true,
      '1',
      [],
      {},
      [1],
      'OV-01',
      'ov 1',
      773.15,
      773.16,
      -0.1,
      2147483647,
      2147483648,
    ];
    /** A power-cycling report: a counter and either no swing or a (low ≤ high) pair. */
    const cycleReport = () => {
      const low = rnd() < 0.3 ? null : rnd() * 150;
      return { cycles: Math.floor(rnd() * 1e6), dTjLowC: low, dTjHighC: low === null ? null : low + rnd() * 10 };
    };
    const valid = (): Record<string, unknown> => {
      const n = 1 + Math.floor(rnd() * 8);
      const first = Math.floor(rnd() * (256 - n));
      const cycling = rnd() < 0.4;
      return columns({
        ...good(),
        seq: 1 + Math.floor(rnd() * 1e6),
        humidityPct: rnd() < 0.5 ? null : rnd() * 100,
        sockets: Array.from({ length: n }, (_, k) => ({
          i: first + k,
          caseC: -40 + rnd() * 300,
          vV: (rnd() - 0.5) * 2000,
          iA: (rnd() - 0.5) * 10,
          biasOn: rnd() < 0.5,
          tripped: rnd() < 0.1,
          ...(cycling ? cycleReport() : {}),
        })),
      });
    };
    const mutate = (m: Record<string, unknown>): void => {
      const key = pick(Object.keys(m));
      const value = m[key];
      const r = rnd();
      if (Array.isArray(value) && r < 0.5) {
        if (r < 0.3 && value.length) value[Math.floor(rnd() * value.length)] = pick(wild);
        else if (r < 0.4) value.pop();
        else value.push(pick(wild));
      } else if (r < 0.8) m[key] = pick(wild);
      else if (r < 0.9) delete m[key];
      else m[pick(['extra', 'note'])] = 1;
    };
    let refused = 0;
    let fast = 0;
    let fastCycling = 0;
    let stripped = 0;
    for (let k = 0; k < 4000; k++) {
      const m = valid();
      if (k % 8 !== 0) mutate(m);
      if (rnd() < 0.3) mutate(m);
      const text = JSON.stringify(m).replace('"extra"', rnd() < 0.5 ? '"__proto__"' : '"extra"');
      const json = JSON.parse(text);
      const reference = telemetryColumnsSchema.safeParse(json);
      if (isPlainTelemetryColumns(json)) {
        fast++;
        if (json.cycles) fastCycling++;
        expect(reference.success).toBe(true);
        expect(reference.data).toEqual(json);
      }
      const ours = parseTelemetry(text);
      if (json?.v === 2) {
        const zodOnly = parsePayload(telemetryColumnsSchema, text);
        expect(ours).toEqual(zodOnly);
      } else {
        // Any other version is judged as the object form (v1).
        expect(ours).toEqual(v1Reference(text));
      }
      if (!ours.ok) refused++;
      else if (!isPlainTelemetryColumns(JSON.parse(text))) stripped++;
    }
    expect(refused).toBeGreaterThan(1500);
    expect(fast).toBeGreaterThan(500);
    expect(fastCycling).toBeGreaterThan(150);
    expect(stripped).toBeGreaterThan(20);
  });

  test('power-cycling columns round-trip through both forms', () => {
    const t = {
      ...good(),
      sockets: good().sockets.map((x, k) => ({ ...x, cycles: 41 + k, dTjLowC: k ? null : 103.5, dTjHighC: k ? null : 104.25 })),
    };
    const text = telemetryColumnsText(t);
    expect(JSON.parse(text)).toMatchObject({ cycles: [41, 42], dTjLowC: [103.5, null], dTjHighC: [104.25, null] });
    const fromColumns = parseTelemetry(text);
    const fromObjects = parseTelemetry(JSON.stringify(t));
    expect(fromColumns).toEqual({ ok: true, data: telemetryFromReadings({ ...t, v: 2 }) });
    expect(fromObjects).toEqual({ ok: true, data: telemetryFromReadings(t) });
    if (!fromColumns.ok) throw new Error(fromColumns.reason);
    expect(telemetryColumnsText(fromColumns.data)).toBe(text);
  });

  const cycling = () => ({ ...columns(good()), cycles: [5, 6], dTjLowC: [100, null], dTjHighC: [101, null] });
  test.each([
    [
      'cycles without swings',
      (c: Record<string, unknown>) => delete c.dTjHighC,
      'dTjHighC: missing: cycles, dTjLowC and dTjHighC come together',
    ],
    ['a swing pair upside down', (c: Record<string, unknown>) => (c.dTjLowC = [102, null]), 'dTjLowC.0: dTjLowC 102 is above dTjHighC 101'],
    [
      'half a swing pair',
      (c: Record<string, unknown>) => (c.dTjHighC = [101, 99]),
      'dTjLowC.1: dTjLowC and dTjHighC are both null or both numbers',
    ],
    ['a negative counter', (c: Record<string, unknown>) => (c.cycles = [5, -1]), 'cycles.1: Too small: expected number to be >=0'],
    ['a cycle column too short', (c: Record<string, unknown>) => (c.cycles = [5]), 'cycles: 1 values for 2 sockets'],
  ])('%s is refused with a readable reason', (_label, change, reason) => {
    const c = cycling();
    expect(parseTelemetry(JSON.stringify(c)).ok).toBe(true);
    change(c);
    expect(parseTelemetry(JSON.stringify(c))).toEqual({ ok: false, reason });
  });
});

describe('commands', () => {
  test('the discriminated union accepts each command type', () => {
    const bodies = [
      { v: 1, cmdId: 'a1', type: 'setpoint', setpointC: 150, humidityPct: null },
      { v: 1, cmdId: 'a2', type: 'bias', sockets: 'all', on: true, vV: 160 },
      { v: 1, cmdId: 'a3', type: 'trip', socket: 5, reason: 'Tj projected above rating' },
      { v: 1, cmdId: 'a4', type: 'reset-trip', socket: 5 },
      {
        v: 1,
        cmdId: 'a5',
        type: 'stored',
        ranges: [
          [1, 40],
          [42, 42],
        ],
      },
    ];
    for (const b of bodies) expect(parseCommand(JSON.stringify(b))).toMatchObject({ ok: true });
    expect(parseCommand(JSON.stringify({ v: 1, cmdId: 'a6', type: 'stored', ranges: [[5, 4]] }))).toEqual({
      ok: false,
      reason: 'ranges.0: range start must not exceed its end',
    });
    expect(parseCommand(JSON.stringify({ v: 1, cmdId: 'a7', type: 'explode' })).ok).toBe(false);
  });

  test('a bias command may carry a regulated collector current, never a negative one', () => {
    const cmd = parseCommand(JSON.stringify({ v: 1, cmdId: 'b1', type: 'bias', sockets: [0, 1], on: true, vV: 20, icA: 0.5 }));
    expect(cmd).toEqual({ ok: true, data: { v: 1, cmdId: 'b1', type: 'bias', sockets: [0, 1], on: true, vV: 20, icA: 0.5 } });
    const bad = parseCommand(JSON.stringify({ v: 1, cmdId: 'b2', type: 'bias', sockets: 'all', on: true, icA: -0.1 }));
    expect(bad.ok).toBe(false);
    expect(bad.ok ? '' : bad.reason).toMatch(/^icA: /);
  });

  test('stored commands carry merged ranges and split when very long', () => {
    let n = 0;
    const [cmd] = buildStoredCommands([3, 1, 2, 7], () => `s${++n}`);
    expect(cmd).toEqual({
      v: 1,
      type: 'stored',
      cmdId: 's1',
      ranges: [
        [1, 3],
        [7, 7],
      ],
    });
    expect(seqInRanges(2, cmd.ranges)).toBe(true);
    expect(seqInRanges(5, cmd.ranges)).toBe(false);
    const odd = Array.from({ length: 2500 }, (_, k) => 2 * k + 1); // 2500 separate ranges
    expect(buildStoredCommands(odd, () => 'x').map((c) => c.ranges.length)).toEqual([1000, 1000, 500]);
  });
});

describe('packet size guard', () => {
  // PUBLISH fixed header: 0x30, remaining length as a varint (MQTT 3.1.1 §2.2.3)
  const header = (len: number) => {
    const bytes = [0x30];
    do {
      let b = len % 128;
      len = Math.floor(len / 128);
      if (len > 0) b |= 0x80;
      bytes.push(b);
    } while (len > 0);
    return Buffer.from(bytes);
  };

  test('passes packets under the cap split across chunks; trips on the header of a large one', () => {
    const g = new PacketSizeGuard(1000);
    const p1 = Buffer.concat([header(500), Buffer.alloc(500)]);
    const p2 = Buffer.concat([header(200), Buffer.alloc(200)]);
    const stream = Buffer.concat([p1, p2]);
    for (let k = 0; k < stream.length; k += 7) expect(g.feed(stream.subarray(k, k + 7))).toBe(true);
    const big = header(100_000);
    expect(g.feed(big.subarray(0, 2))).toBe(true); // varint not complete yet
    expect(g.feed(big.subarray(2))).toBe(false);
    expect(g.tripped).toBe(true);
  });
});
