/**
 * Shared generators and helpers for the fuzz suites (tests/api/fuzz*.test.ts, tests/broker/fuzz.test.ts).
 *
 * Every suite draws its inputs with `fc.sample(arb, { seed, numRuns })` from a seed derived from
 * FUZZ_SEED and a label (route, category), so one failing batch can be replayed on its own:
 *   EMBERLOT_FUZZ_SEED=<seed> npm test -- tests/api/fuzz.test.ts
 * Failures are collected per batch (not shrunk) and printed with the seed and the input.
 */
import fc from 'fast-check';
import * as http from 'node:http';
import type { AddressInfo } from 'node:net';
import type { EntityManager } from 'typeorm';
import type { ZodType } from 'zod';
import { DeviceEntity, LotEntity, RigEntity, RunEntity } from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { insertTestDeviceType, insertTestHtrbPlan } from './db';
import type { RegisteredRoute } from '../../server/http/route';
import { ROLES, type Role } from '../../shared/roles';
import {
  acknowledgeAlarmSchema,
  alarmListQuerySchema,
  mailListQuerySchema,
  notificationListQuerySchema,
} from '../../shared/schemas/alarms';
import { deviceTypeQuerySchema, lotListQuerySchema as analyticsLotQuerySchema } from '../../shared/schemas/analytics';
import { signInSchema } from '../../shared/schemas/auth';
import {
  addSerialsSchema,
  deviceTypeCreateSchema,
  deviceTypeListQuerySchema,
  deviceTypePatchSchema,
  lotInputSchema,
  lotListQuerySchema,
} from '../../shared/schemas/devices';
import { apiErrorSchema } from '../../shared/schemas/errors';
import { floorChartQuerySchema } from '../../shared/schemas/floor';
import { manualEntrySchema } from '../../shared/schemas/measurements';
import { planInputSchema, planListQuerySchema, planTemplatesQuerySchema } from '../../shared/schemas/plans';
import {
  createRigSchema,
  maintenanceInputSchema,
  rejectionsQuerySchema,
  revokeRigSchema,
  updateRigSchema,
} from '../../shared/schemas/rigs';
import {
  abortRunSchema,
  bookRunSchema,
  bookSampleSchema,
  proposalInputSchema,
  runActionSchema,
  runListQuerySchema,
  socketLoadSchema,
  timelineQuerySchema,
} from '../../shared/schemas/runs';
import { confirmReadingSchema, dispositionInputSchema, withdrawDispositionSchema } from '../../shared/schemas/evidence';
import { createUserSchema, updateUserSchema } from '../../shared/schemas/users';
import { emailFor, TEST_PASSWORD, type TestApp } from './api';

export const FUZZ_SEED = Number(process.env.EMBERLOT_FUZZ_SEED ?? 20260214);

/** A stable per-label seed (FNV-1a of the label mixed with FUZZ_SEED). */
export function seedFor(label: string): number {
  let h = 0x811c9dc5 ^ FUZZ_SEED;
  for (let k = 0; k < label.length; k++) {
    h ^= label.charCodeAt(k);
    h = Math.imul(h, 0x01000193);
  }
  return h | 0;
}

/** Draw `n` inputs reproducibly. */
export function draw<T>(arb: fc.Arbitrary<T>, label: string, n: number): T[] {
  return fc.sample(arb, { seed: seedFor(label), numRuns: n });
}

// ---------------------------------------------------------------------------------------------
// Scalars

/** Numbers no Emberlot field accepts: beyond every bound, below absolute zero, unsafe integers. */
export const hostileNumber: fc.Arbitrary<number> = fc.oneof(
  fc.constantFrom(1e308, -1e308, Number.MAX_VALUE, -Number.MAX_VALUE, 1e21, -1e21, 2 ** 53 + 2, -(2 ** 53) - 2),
  // Below absolute zero (-273.15 °C), in °C and °F-looking values.
  fc.constantFrom(-273.16, -274, -300, -459.67, -1000),
  fc.double({ min: -1e300, max: -1e7, noNaN: true }),
  fc.double({ min: 1e7, max: 1e300, noNaN: true }),
);

/** Strings that look like numbers (or special values) but are strings in JSON. */
export const numberLikeString: fc.Arbitrary<string> = fc.constantFrom(
  'NaN',
  'Infinity',
  '-Infinity',
  '+Infinity',
  '1e308',
  '-1e308',
  '1e309',
  '0x1F',
  '12abc',
  '4_2',
  ' 42 ',
  '١٢٣',
  '−5',
  '1,5',
  '',
);

/** Any UTF-16 code unit: NUL, control characters and lone surrogates included. */
const anyCodeUnit = fc.integer({ min: 0, max: 0xffff }).map((n) => String.fromCharCode(n));

/** Unicode trouble: RTL overrides, emoji, NUL, lone surrogates, BOMs, over-long strings, injections. */
export const hostileString: fc.Arbitrary<string> = fc.oneof(
  fc.constantFrom(
    '\u202Egnp.exe\u202C',
    '\u200F\u200E\u061C',
    '🔥🧪⚡🌡️',
    '👩🏽‍🔬'.repeat(50),
    '\u0000',
    'OV\u000001',
    '\uD800',
    'x\uDC00y',
    '\uFEFFHPD',
    '\r\n\t\u000b\u000c',
    'x'.repeat(10_000),
    '𝕳'.repeat(5_000),
    "'; DROP TABLE lot; --",
    '<script>alert(1)</script>',
    '../../etc/passwd',
    '%00%2e%2e%2f',
    '${7*7}{{7*7}}',
    "=cmd|' /C calc'!A0",
    ' ',
  ),
  numberLikeString,
  fc.string({ unit: anyCodeUnit, maxLength: 60 }),
  fc.string({ unit: 'grapheme', maxLength: 60 }),
);

/** A JSON value of the wrong kind for almost any field. */
export const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 3, arbitrary: hostileNumber },
  { weight: 3, arbitrary: hostileString },
  { weight: 1, arbitrary: fc.constantFrom<unknown>(null, true, false, [], {}, [[]], [null], { '': '' }) },
  { weight: 1, arbitrary: fc.array(fc.jsonValue({ maxDepth: 2 }), { maxLength: 5 }) },
  { weight: 1, arbitrary: fc.dictionary(fc.string({ maxLength: 8 }), fc.jsonValue({ maxDepth: 2 }), { maxKeys: 4 }) },
);

// ---------------------------------------------------------------------------------------------
// Whole requests

export interface FuzzRequest {
  /** Category name, used in reports and in the per-category counts of docs/reliability.md. */
  kind: string;
  /** A JSON-serialisable body (sent with application/json). */
  json?: unknown;
  /** Raw bytes or text with an explicit content type (and maybe other headers). */
  raw?: string | Buffer;
  contentType?: string;
  headers?: Record<string, string>;
  /** Exact status expected (413 for oversized); otherwise any 4xx. */
  status?: number;
}

type Path = Array<string | number>;

/** Every path inside a JSON value (objects and arrays), the root excluded. */
export function pathsOf(v: unknown, prefix: Path = []): Path[] {
  const out: Path[] = [];
  if (Array.isArray(v)) v.forEach((x, i) => out.push([...prefix, i], ...pathsOf(x, [...prefix, i])));
  else if (v && typeof v === 'object') {
    for (const [k, x] of Object.entries(v)) out.push([...prefix, k], ...pathsOf(x, [...prefix, k]));
  }
  return out;
}

const clone = <T>(v: T): T => JSON.parse(JSON.stringify(v));

function setAt(root: unknown, path: Path, value: unknown, remove = false): unknown {
  if (path.length === 0) return value;
  const copy = clone(root) as Record<string | number, unknown>;
  let node = copy as Record<string | number, unknown>;
  for (const key of path.slice(0, -1)) {
    const next = node?.[key];
    // An earlier mutation replaced a parent with a scalar: nothing left to set inside it.
    if (!next || typeof next !== 'object') return copy;
    node = next as Record<string | number, unknown>;
  }
  if (!node || typeof node !== 'object') return copy;
  const last = path[path.length - 1];
  if (remove) {
    if (Array.isArray(node)) node.splice(Number(last), 1);
    else delete node[last];
  } else node[last] = value;
  return copy;
}

/**
 * Malformed variants of a valid sample body: one field (at any depth) replaced by a hostile value,
 * a required field removed, the whole body replaced by an array or a scalar, extra keys. Only
 * variants the route's own schema refuses are kept (so the server must refuse them too).
 */
export function mutatedBody(sample: unknown, schema: ZodType): fc.Arbitrary<unknown> {
  const paths = pathsOf(sample);
  const ops: Array<fc.Arbitrary<unknown>> = [
    fc.tuple(fc.constantFrom(...paths), hostileValue).map(([p, v]) => setAt(sample, p, v)),
    fc
      .tuple(fc.constantFrom(...paths), fc.constantFrom(...paths), hostileValue, hostileValue)
      .map(([p, q, v, w]) => setAt(setAt(sample, p, v), q, w)),
    fc.constantFrom(...paths).map((p) => setAt(sample, p, undefined, true)),
    fc.constantFrom<unknown>([sample], [], 'body', 42, null, true, [[sample]]),
    fc
      .dictionary(fc.constantFrom('x', 'admin', 'role', 'id', 'createdAt', 'isAdmin'), hostileValue, { minKeys: 1, maxKeys: 3 })
      .map((extra) => (Array.isArray(sample) ? [...(sample as unknown[]), extra] : { ...(sample as object), ...extra })),
  ];
  return fc.oneof(...ops).filter((b) => !schema.safeParse(b).success);
}

/** Text of a JSON object with prototype-pollution keys prepended (JSON.parse keeps them as own keys). */
export function withPollutionKeys(body: unknown, variant: number): string {
  const keys = [
    '"__proto__":{"polluted":"yes","isAdmin":true}',
    '"constructor":{"prototype":{"polluted":"yes"}}',
    '"__proto__":{"__proto__":{"polluted":"yes"}}',
    '"prototype":{"polluted":"yes"},"__defineGetter__":"x"',
  ][variant % 4];
  const text = JSON.stringify(body);
  if (text.startsWith('{')) return text === '{}' ? `{${keys}}` : `{${keys},${text.slice(1)}`;
  if (text.startsWith('[')) return `[{${keys}}${text === '[]' ? '' : ','}${text.slice(1)}`;
  return `{${keys}}`;
}

/** Deeply nested JSON text: arrays, objects or both, up to depth levels. */
export function deepJson(depth: number, kind: 'array' | 'object' | 'mixed'): string {
  if (kind === 'array') return '['.repeat(depth) + ']'.repeat(depth);
  if (kind === 'object') return '{"a":'.repeat(depth) + '1' + '}'.repeat(depth);
  return '{"a":['.repeat(depth) + '1' + ']}'.repeat(depth);
}

/** A body over the 1 MB JSON limit (valid JSON, so only the size is wrong). */
export const oversizedJson = (bytes = 1024 * 1024 + 4096) => JSON.stringify({ notes: 'x'.repeat(bytes) });

const WRONG_TYPES = [
  'text/plain',
  'text/html',
  'application/xml',
  'application/x-www-form-urlencoded',
  'application/octet-stream',
  'application/vnd.api+json',
  'application/csp-report',
  'image/png',
];
const BAD_CHARSETS = ['latin1', 'iso-8859-1', 'utf-16', 'utf-16le', 'koi8-r', 'x-unknown', 'utf-7'];

/**
 * Malformed requests for a body route. `sample`/`schema` (when known) steer mutations at the real
 * fields; without them only route-agnostic garbage is produced. Every request here must be refused
 * with a 4xx (413 for the oversized ones).
 */
export function malformedRequest(sample?: unknown, schema?: ZodType): fc.Arbitrary<FuzzRequest> {
  const base = sample ?? { name: 'HPD sample', value: 1 };
  const invalid = sample !== undefined && schema ? mutatedBody(sample, schema) : fc.constantFrom<unknown>([], 'x', 1, null, [base]);
  const emptyIsInvalid = !schema || !schema.safeParse({}).success;
  const arbs: Array<{ weight: number; arbitrary: fc.Arbitrary<FuzzRequest> }> = [
    { weight: 10, arbitrary: invalid.map((json) => ({ kind: 'wrong types / missing fields / huge numbers / unicode', json })) },
    {
      weight: 2,
      arbitrary: fc
        .tuple(invalid, fc.nat(3))
        .map(([b, v]) => ({ kind: 'prototype-pollution keys', raw: withPollutionKeys(b, v), contentType: 'application/json' })),
    },
    {
      weight: 2,
      arbitrary: fc.integer({ min: 1, max: Math.max(1, JSON.stringify(base).length - 1) }).map((cut) => ({
        kind: 'truncated JSON',
        raw: JSON.stringify(base).slice(0, cut),
        contentType: 'application/json',
      })),
    },
    {
      weight: 1,
      arbitrary: fc
        .constantFrom(
          '{',
          '{"a":1,}',
          "{'a':1}",
          '{"a":NaN}',
          '{"a":Infinity}',
          '{"a":-Infinity}',
          '{"a":01}',
          '{"a":1e999}',
          'undefined',
          'null',
          '"text"',
          '12',
          'true',
          '\uFEFF{}',
          '{"a":"\\ud800"',
          '{"a":"\\u00"}',
          '/* */{}',
        )
        .map((raw) => ({ kind: 'truncated JSON', raw, contentType: 'application/json' })),
    },
    {
      weight: 1,
      arbitrary: fc
        .tuple(fc.integer({ min: 1_000, max: 20_000 }), fc.constantFrom<'array' | 'object' | 'mixed'>('array', 'object', 'mixed'))
        .map(([d, k]) => ({ kind: 'deeply nested', raw: deepJson(d, k), contentType: 'application/json' })),
    },
    {
      weight: 2,
      arbitrary: fc
        .tuple(fc.constantFrom(...WRONG_TYPES), fc.boolean())
        .filter(() => emptyIsInvalid)
        .map(([ct, asForm]) => ({
          kind: 'wrong content-type',
          raw: asForm ? 'name=x&role=admin&__proto__[polluted]=yes' : JSON.stringify(base),
          contentType: ct,
        })),
    },
    {
      // Declared charsets other than UTF-8 (a UTF-16 body is legal JSON text, so the body itself is invalid too).
      weight: 2,
      arbitrary: fc.tuple(fc.constantFrom(...BAD_CHARSETS), invalid).map(([cs, b]) => ({
        kind: 'wrong charset',
        raw: cs.startsWith('utf-16')
          ? Buffer.from(`\uFEFF${JSON.stringify(b) ?? 'null'}`, 'utf16le')
          : Buffer.from(JSON.stringify(b) ?? 'null', 'latin1'),
        contentType: `application/json; charset=${cs}`,
      })),
    },
    {
      weight: 1,
      arbitrary: fc
        .tuple(fc.constantFrom('gzip', 'deflate', 'br', 'compress', 'x-evil'), fc.uint8Array({ minLength: 0, maxLength: 64 }))
        .map(([enc, bytes]) => ({
          kind: 'wrong charset',
          raw: Buffer.from(bytes),
          contentType: 'application/json',
          headers: { 'Content-Encoding': enc },
        })),
    },
    {
      // Latin-1 / random bytes sent as if they were UTF-8, inside an otherwise invalid body.
      weight: 1,
      arbitrary: fc.tuple(fc.uint8Array({ minLength: 1, maxLength: 256 }), invalid).map(([bytes, b]) => ({
        kind: 'wrong charset',
        raw: Buffer.concat([
          Buffer.from('{"x":"'),
          Buffer.from(bytes),
          Buffer.from('","body":'),
          Buffer.from(JSON.stringify(b) ?? 'null'),
          Buffer.from('}'),
        ]),
        contentType: 'application/json; charset=utf-8',
      })),
    },
  ];
  return fc.oneof(...arbs);
}

/** The oversized request of a route (sent once per route: each is over 1 MB). */
export const oversizedRequest = (): FuzzRequest => ({
  kind: 'oversized body (> 1 MB)',
  raw: oversizedJson(),
  contentType: 'application/json',
  status: 413,
});

// ---------------------------------------------------------------------------------------------
// Query strings

/** Raw query strings of trouble: arrays, nested keys, bad percent-encoding, NUL, huge values. */
export const hostileQueryString: fc.Arbitrary<string> = fc.oneof(
  fc.constantFrom(
    'limit=NaN',
    'limit=Infinity',
    'limit=-1e308',
    'limit=1e308',
    'limit=1.5',
    'limit=-1',
    'offset=-5',
    'offset=9e99',
    'limit=1&limit=2',
    'status[]=open',
    'status[$ne]=x',
    '__proto__[polluted]=yes',
    'constructor[prototype][polluted]=yes',
    'q=%00',
    'q=%E0%A4%A',
    'q=%',
    'q=%ZZ',
    `q=${'x'.repeat(10_000)}`,
    'from=not-a-date&to=2026-13-45T99:99:99Z',
    'deviceTypeId=../../etc/passwd',
    'rigId=00000000-0000-0000-0000-00000000000G',
    'ltpdPct=0',
    'ltpdPct=100',
    'ltpdPct=-273.16',
    'acceptNumber=1e400',
    'points=1',
    'sockets=999',
    'state=stressing%00',
    'open=2',
    'preview=maybe',
    'unread=yes',
    'kind=%F0%9F%94%A5',
    'q=%D8%00',
    'limit=%EF%BC%91',
  ),
  fc
    .array(
      fc.tuple(
        fc.constantFrom(
          'limit',
          'offset',
          'q',
          'status',
          'kind',
          'state',
          'deviceTypeId',
          'rigId',
          'runId',
          'from',
          'to',
          'points',
          'sockets',
          'verdict',
          'ltpdPct',
          'acceptNumber',
          'rig',
          'severity',
          'open',
          'unread',
        ),
        fc.oneof(hostileString, numberLikeString),
      ),
      {
        minLength: 1,
        maxLength: 4,
      },
    )
    .map((pairs) => pairs.map(([k, v]) => `${k}=${encodeURIComponent(v.replace(/[\uD800-\uDFFF]/g, '\uFFFD'))}`).join('&')),
);

// ---------------------------------------------------------------------------------------------
// Checking replies

/** Problems with a reply that should be a refusal: not 4xx, not the error shape, extra top-level keys. */
export function refusalProblems(status: number, body: unknown, expected?: number): string[] {
  const out: string[] = [];
  if (expected !== undefined ? status !== expected : status < 400 || status > 499)
    out.push(`status ${status}${expected ? ` (expected ${expected})` : ' (expected 4xx)'}`);
  // The fuzz signs in with an admitted role: a 401/403 means the guard answered, not validation.
  else if (expected === undefined && (status === 401 || status === 403))
    out.push(`status ${status}: refused by the access guard, so validation was not exercised`);
  const shape = apiErrorSchema.safeParse(body);
  if (!shape.success) out.push(`body is not the error shape: ${JSON.stringify(body)?.slice(0, 200)}`);
  else if (Object.keys(body as object).length !== 1) out.push(`extra top-level keys: ${Object.keys(body as object).join(', ')}`);
  else if (shape.data.error.message.trim() === '') out.push('empty error message');
  return out;
}

/** A reply that may succeed or refuse, but never 5xx and never a refusal outside the error shape. */
export function replyProblems(status: number, body: unknown): string[] {
  if (status >= 500) return [`status ${status}: ${JSON.stringify(body)?.slice(0, 200)}`];
  if (status >= 400) return refusalProblems(status, body);
  return [];
}

/** Short, printable form of an input for failure reports. */
export function show(v: unknown, max = 240): string {
  let s: string;
  if (Buffer.isBuffer(v)) s = `<${v.length} bytes: ${v.subarray(0, 40).toString('hex')}…>`;
  else if (typeof v === 'string') s = v.length > max ? `${JSON.stringify(v.slice(0, max))}…(${v.length} chars)` : JSON.stringify(v);
  else s = JSON.stringify(v) ?? String(v);
  return s.length > max + 40 ? `${s.slice(0, max)}…(${s.length} chars)` : s;
}

/** Run async jobs with a small concurrency limit (keeps the loaded test machine responsive). */
export async function inPool<T>(items: T[], limit: number, job: (item: T, index: number) => Promise<void>): Promise<void> {
  let next = 0;
  const workers = Array.from({ length: Math.min(limit, items.length) }, async () => {
    while (next < items.length) {
      const i = next++;
      await job(items[i], i);
    }
  });
  await Promise.all(workers);
}

/** Tallies of inputs tried per category, printed at the end of a suite for docs/reliability.md. */
export class Tally {
  readonly counts = new Map<string, number>();
  add(kind: string, n = 1) {
    this.counts.set(kind, (this.counts.get(kind) ?? 0) + n);
  }
  get total() {
    return [...this.counts.values()].reduce((a, b) => a + b, 0);
  }
  report(title: string): string {
    const rows = [...this.counts.entries()].sort((a, b) => b[1] - a[1]).map(([k, n]) => `  ${String(n).padStart(6)}  ${k}`);
    return `${title}: ${this.total} inputs\n${rows.join('\n')}`;
  }
}

// ---------------------------------------------------------------------------------------------
// The API route harness: valid sample bodies per route (mutations start from these), the schema
// each route validates with, fixtures so concrete paths name real rows, and an agent per route.

export const SAMPLE_ID = '00000000-0000-4000-8000-000000000000';
export const MISSING_RIG = 'ZZ-99';

export interface FuzzIds {
  type: string;
  lot: string;
  plan: string;
  rig: string;
  rigId: string;
  user: string;
}

export const sampleBodies = (ids: FuzzIds) => ({
  deviceType: () => ({
    partNumber: 'HPD-FZ90',
    polarity: 'PNP',
    bvcboV: 100,
    bvceoV: 60,
    bveboV: 5,
    icMaxA: 3,
    pMaxW: 40,
    tjMaxC: 150,
    thetaJcCPerW: 3.125,
    thetaJaCPerW: 62.5,
    betaRef: 70,
    betaRefIcA: 1,
  }),
  lot: () => ({ code: 'HG-FZ-02', deviceTypeId: ids.type, quantity: 500, dateCode: '2607', notes: 'fuzz fixture' }),
  plan: () => ({
    name: 'HTRB 125 °C fuzz fixture',
    kind: 'htrb',
    deviceTypeId: ids.type,
    chamberC: 125,
    bias: { vcbV: 60 },
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    sampleSize: 77,
    acceptNumber: 0,
    criteria: {},
  }),
  rig: () => ({ code: 'OV-78', name: 'Fuzz oven', location: 'Bay F', socketCount: 32, maxTempC: 175, maxVoltageV: 100 }),
});

export interface BodySpec {
  schema: ZodType;
  sample: () => unknown;
}

/** Keyed by "method path" (no trailing slash); a regexp key covers a family of paths. */
export function bodySpecs(ids: FuzzIds): Array<[string | RegExp, BodySpec]> {
  const s = sampleBodies(ids);
  const rowVersion = { rowVersion: 1 };
  return [
    ['post /api/auth/sign-in', { schema: signInSchema, sample: () => ({ email: 'nobody@test.example', password: 'not-the-password' }) }],
    [
      'post /api/users',
      {
        schema: createUserSchema,
        sample: () => ({ email: 'new.person@test.example', name: 'New Person', role: 'operator', password: 'long-enough-password' }),
      },
    ],
    ['patch /api/users/:id', { schema: updateUserSchema, sample: () => ({ name: 'Renamed Person', notifyAlarms: false }) }],
    ['post /api/device-types', { schema: deviceTypeCreateSchema, sample: s.deviceType }],
    ['put /api/device-types/:id', { schema: deviceTypeCreateSchema, sample: s.deviceType }],
    ['patch /api/device-types/:id', { schema: deviceTypePatchSchema, sample: () => ({ description: 'TO-220 PNP', tjMaxC: 150 }) }],
    ['post /api/lots', { schema: lotInputSchema, sample: s.lot }],
    ['post /api/lots/:id/serials', { schema: addSerialsSchema, sample: () => ({ serials: ['FZ0100', 'FZ0101'] }) }],
    ['post /api/plans', { schema: planInputSchema, sample: s.plan }],
    ['post /api/plans/check', { schema: planInputSchema, sample: s.plan }],
    ['post /api/plans/:id/versions', { schema: planInputSchema, sample: s.plan }],
    [
      'post /api/measurements/runs/:runId/read-points/:hours/measurements',
      {
        schema: manualEntrySchema,
        sample: () => [{ serial: 'FZ0001', hfe: 120, hfeIcA: 0.15, hfeVceV: 5, icboA: 2e-8, icboVcbV: 60, vcesatV: 0.22, measuredC: 25 }],
      },
    ],
    ['post /api/alarms/:id/acknowledge', { schema: acknowledgeAlarmSchema, sample: () => ({ note: 'Clamp re-seated, socket 4 checked' }) }],
    ['post /api/rigs', { schema: createRigSchema, sample: s.rig }],
    ['patch /api/rigs/:code', { schema: updateRigSchema, sample: () => ({ name: 'Fuzz oven renamed', maxTempC: 180 }) }],
    ['post /api/rigs/:code/revoke', { schema: revokeRigSchema, sample: () => ({ reason: 'Controller board swapped' }) }],
    [
      'post /api/rigs/:code/maintenance',
      {
        schema: maintenanceInputSchema,
        sample: () => ({ startsAt: '2026-03-02T08:00:00Z', endsAt: '2026-03-02T12:00:00Z', reason: 'Thermocouple calibration' }),
      },
    ],
    ['post /api/runs/proposals', { schema: proposalInputSchema, sample: () => ({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 2 }) }],
    ['post /api/runs', { schema: bookRunSchema, sample: () => ({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 2, rigId: ids.rigId }) }],
    [
      'post /api/runs/samples',
      {
        schema: bookSampleSchema,
        sample: () => ({
          planId: ids.plan,
          lotIds: [ids.lot],
          parts: [{ rigId: ids.rigId, sampleSize: 2 }],
          deviation: { reason: 'Fuzz fixture short sample' },
        }),
      },
    ],
    [
      'post /api/evidence/runs/:runId/dispositions',
      { schema: dispositionInputSchema, sample: () => ({ serial: 'FZ0001', readPointH: 0, kind: 'lost', reason: 'Dropped on the floor' }) },
    ],
    [
      'post /api/evidence/dispositions/:id/withdraw',
      { schema: withdrawDispositionSchema, sample: () => ({ reason: 'Recorded against the wrong serial' }) },
    ],
    [
      'post /api/evidence/measurements/:id/confirm',
      { schema: confirmReadingSchema, sample: () => ({ reason: 'Tester re-calibrated; same fixture' }) },
    ],
    [
      'put /api/runs/:id/sockets',
      { schema: socketLoadSchema, sample: () => ({ ...rowVersion, sockets: { '0': 'FZ0001', '1': 'FZ0002' }, dryRun: true }) },
    ],
    ['post /api/runs/:id/abort', { schema: abortRunSchema, sample: () => ({ ...rowVersion, reason: 'Wrong board fitted' }) }],
    [
      /^post \/api\/runs\/:id\/(start|pause|resume|measurements-done)$/,
      { schema: runActionSchema, sample: () => ({ ...rowVersion, reason: 'Shift change' }) },
    ],
  ];
}

/** Routes that take no JSON body at all (multipart uploads, actions): JSON garbage is ignored there. */
export const NO_JSON_BODY = new Set([
  'post /api/auth/sign-out',
  'post /api/notifications/read-all',
  'post /api/notifications/:id/read',
  'post /api/rigs/:code/credentials',
  'post /api/lots/:id/serials/csv',
  'post /api/lots/serials/parse-csv',
  'post /api/measurements/runs/:runId/read-points/:hours/upload',
]);

/** Query schemas of the GET routes that declare one. */
export const QUERY_SPECS: Record<string, ZodType> = {
  'get /api/alarms': alarmListQuerySchema,
  'get /api/notifications': notificationListQuerySchema,
  'get /api/mail': mailListQuerySchema,
  'get /api/analytics/lots': analyticsLotQuerySchema,
  'get /api/analytics/device-types': deviceTypeQuerySchema,
  'get /api/analytics/device-types/:id': deviceTypeQuerySchema,
  'get /api/device-types': deviceTypeListQuerySchema,
  'get /api/lots': lotListQuerySchema,
  'get /api/plans': planListQuerySchema,
  'get /api/plans/templates': planTemplatesQuerySchema,
  'get /api/runs': runListQuerySchema,
  'get /api/runs/timeline': timelineQuerySchema,
  'get /api/telemetry/rejections': rejectionsQuerySchema,
  'get /api/floor/rigs/:code/chart': floorChartQuerySchema,
};

/** "post /api/users" for the router's "/api/users/" too. */
export const keyOf = (r: RegisteredRoute) => `${r.method} ${r.path.length > 1 ? r.path.replace(/\/$/, '') : r.path}`;

export const bodySpecOf = (specs: Array<[string | RegExp, BodySpec]>, r: RegisteredRoute): BodySpec | undefined =>
  specs.find(([k]) => (typeof k === 'string' ? k === keyOf(r) : k.test(keyOf(r))))?.[1];

/** A concrete address for a declared path: real fixtures where they exist, so a handler would reach the database. */
export function concretePath(r: RegisteredRoute, ids: FuzzIds): string {
  const noBody = NO_JSON_BODY.has(keyOf(r));
  return r.path.replace(/:([A-Za-z]+)/g, (_m, name: string) => {
    if (name === 'code') return noBody ? MISSING_RIG : ids.rig;
    if (name === 'hours') return '0';
    if (name === 'lotId') return ids.lot;
    if (name === 'id' && !noBody) {
      if (r.path.startsWith('/api/device-types') || r.path.startsWith('/api/analytics/device-types')) return ids.type;
      if (r.path.startsWith('/api/lots')) return ids.lot;
      if (r.path.startsWith('/api/plans')) return ids.plan;
      if (r.path.startsWith('/api/users')) return ids.user;
    }
    return SAMPLE_ID;
  });
}

/** One of each fixture (device type, lot with two serials, plan, rig), created through the API. */
export async function createFuzzFixtures(t: TestApp): Promise<FuzzIds> {
  const ids: FuzzIds = { type: '', lot: '', plan: '', rig: 'OV-77', rigId: '', user: '' };
  const s = sampleBodies(ids);
  const eng = await t.signIn('engineer');
  const admin = await t.signIn('admin');
  const ok = (res: { status: number; body: unknown }, what: string) => {
    if (res.status !== 201 && res.status !== 200) throw new Error(`fixture ${what}: ${res.status} ${JSON.stringify(res.body)}`);
    return res.body as Record<string, unknown>;
  };
  ids.type = ok(await eng.post('/api/device-types').send(s.deviceType()), 'device type').id as string;
  ids.lot = ok(await eng.post('/api/lots').send({ ...s.lot(), code: 'HG-FZ-01', serials: ['FZ0001', 'FZ0002'] }), 'lot').id as string;
  ids.plan = ok(await eng.post('/api/plans').send(s.plan()), 'plan').id as string;
  ids.rigId = (ok(await admin.post('/api/rigs').send({ ...s.rig(), code: ids.rig }), 'rig').rig as { id: string }).id;
  const users = ok(await admin.get('/api/users'), 'users').items as Array<{ id: string; role: string }>;
  ids.user = users.find((u) => u.role === 'operator')!.id;
  return ids;
}

/**
 * A plain HTTP client on one listening server (keep-alive fetch): supertest would start a server
 * per request, which is most of the cost of a few thousand calls on a loaded machine.
 */
export interface Reply {
  status: number;
  body: unknown;
  headers: Headers;
}
export class FuzzClient {
  constructor(
    readonly base: string,
    readonly cookie = '',
  ) {}
  async call(method: string, path: string, init: { body?: string | Buffer; headers?: Record<string, string> } = {}): Promise<Reply> {
    const res = await fetch(this.base + path, {
      method: method.toUpperCase(),
      body: init.body as unknown as string | undefined,
      headers: { ...(this.cookie ? { cookie: this.cookie } : {}), ...init.headers },
    });
    const text = await res.text();
    let body: unknown = text;
    try {
      body = text ? JSON.parse(text) : {};
    } catch {
      /* not JSON: keep the text */
    }
    return { status: res.status, body, headers: res.headers };
  }
}

export interface FuzzServer {
  base: string;
  clients: Record<Role | 'public', FuzzClient>;
  close: () => Promise<void>;
}

/** Listens on an ephemeral loopback port and signs one client in per role. */
export async function listenWithClients(t: TestApp): Promise<FuzzServer> {
  const server = http.createServer(t.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const clients = { public: new FuzzClient(base) } as Record<Role | 'public', FuzzClient>;
  for (const role of ROLES) {
    const res = await fetch(`${base}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email: emailFor(role), password: TEST_PASSWORD }),
    });
    if (res.status !== 200) throw new Error(`sign-in as ${role}: ${res.status} ${await res.text()}`);
    const cookie = res.headers
      .getSetCookie()
      .map((c) => c.split(';')[0])
      .join('; ');
    clients[role] = new FuzzClient(base, cookie);
  }
  return {
    base,
    clients,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

/** The client of a role the route admits (anonymous for public routes), so validation, not the guard, answers. */
export function clientFor(s: FuzzServer, r: RegisteredRoute): FuzzClient {
  if (r.access === 'public') return s.clients.public;
  return s.clients[r.access === 'signed-in' ? 'engineer' : r.access[0]];
}

export function sendFuzz(c: FuzzClient, method: RegisteredRoute['method'], url: string, q: FuzzRequest): Promise<Reply> {
  const headers = {
    'content-type': q.raw !== undefined ? (q.contentType ?? 'application/json') : 'application/json',
    ...(q.headers ?? {}),
  };
  return c.call(method, url, { body: q.raw !== undefined ? q.raw : JSON.stringify(q.json), headers });
}

/** Same JSON text = same counts (object key order is the table order from tableCounts). */
export const sameCounts = (a: Record<string, number>, b: Record<string, number>) => JSON.stringify(a) === JSON.stringify(b);

export function failWith(problems: string[]): void {
  if (problems.length) {
    throw new Error(`${problems.length} problem(s); replay with EMBERLOT_FUZZ_SEED=${FUZZ_SEED}\n${problems.slice(0, 25).join('\n')}`);
  }
}

/** The server's own check (server/http/route.ts) for strings PostgreSQL cannot store. */
export { findUnstorable as findUnstorableInTest } from '../../server/http/route';

/**
 * A run in 'stressing' with ten devices C001…C010 of one lot on sockets, read point 0 open for
 * uploads (as tests/api/measurements.test.ts builds it). `tag` keeps codes apart between files.
 */
export async function createRunFixture(t: TestApp, tag: string): Promise<{ runId: string; lotId: string }> {
  let runId = '';
  let lotId = '';
  await t.ctx.ds.transaction(async (m: EntityManager) => {
    const type = await insertTestDeviceType(m, `HPD-${tag}1`);
    const plan = await insertTestHtrbPlan(m, type.id, { name: `HTRB 145 °C ${tag} fixture` });
    const rigCode = `OV-9${tag.length}`;
    const rig = await m.save(
      m.create(RigEntity, {
        code: rigCode,
        name: rigCode,
        socketCount: 64,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: `rig-${rigCode.toLowerCase()}`,
        mqttSecretHash: 'x',
        credentialsIssuedAt: new Date(),
      }),
    );
    const lot = await m.save(m.create(LotEntity, { code: `HG99-${tag}`, deviceTypeId: type.id, quantity: 100 }));
    lotId = lot.id;
    const devices = await m.save(
      Array.from({ length: 10 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `C${String(i + 1).padStart(3, '0')}` })),
    );
    const run = await insertHistoryRun(m, {
      code: `HTRB-${tag}-01`,
      plan,
      deviceType: type,
      rig,
      lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
      state: 'stressing',
      startedAt: new Date('2026-01-01T00:00:00Z'),
      stressHours: 600,
      measuredH: [],
      noise: 0,
    });
    await m.update(RunEntity, { id: run.id }, { biasRemovedAt: new Date('2026-02-10T08:00:00Z') });
    runId = run.id;
  });
  return { runId, lotId };
}
