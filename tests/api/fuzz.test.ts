/**
 * API body fuzz, generated from the routers: every POST/PUT/PATCH route gets malformed bodies
 * (wrong types, missing fields, huge numbers, values below absolute zero, unicode, 10k strings,
 * deep nesting, prototype-pollution keys, truncated JSON, wrong content types and charsets, and
 * one body over 1 MB). Each route is called by a role it admits, so validation (not the guard)
 * answers. Per route: every reply is a 4xx in the error shape (never 5xx), the database holds
 * exactly the rows it held before, and /api/health still answers 200.
 *
 * Inputs come from fast-check with a fixed seed (EMBERLOT_FUZZ_SEED overrides); failures print it.
 * GET query strings: tests/api/fuzz-query.test.ts; hostile strings in otherwise valid bodies:
 * tests/api/fuzz-unicode.test.ts; CSV uploads: tests/api/fuzz-csv.test.ts.
 */
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import {
  clientFor,
  listenWithClients,
  type FuzzServer,
  bodySpecOf,
  bodySpecs,
  concretePath,
  createFuzzFixtures,
  draw,
  failWith,
  FUZZ_SEED,
  keyOf,
  malformedRequest,
  NO_JSON_BODY,
  oversizedRequest,
  refusalProblems,
  replyProblems,
  sameCounts,
  sendFuzz,
  show,
  Tally,
  inPool,
  type FuzzIds,
  type FuzzRequest,
} from '../support/fuzz';

const BODY_RUNS = Number(process.env.EMBERLOT_FUZZ_BODY_RUNS ?? 30);
const POOL = 6;

let t: TestApp;
let ids: FuzzIds;
let srv: FuzzServer;
const tally = new Tally();
const covered = { body: new Set<string>(), sampled: new Set<string>() };
let reconciled = 0;
const timing: string[] = [];
const ms = new Map<string, number>();

beforeAll(async () => {
  t = await createTestApp();
  ids = await createFuzzFixtures(t);
  srv = await listenWithClients(t);
}, 30_000);

afterAll(async () => {
  console.log(
    `${tally.report(`API body fuzz (seed ${FUZZ_SEED})`)}\n  routes: ${covered.body.size} body routes (${covered.sampled.size} with schema-guided mutations); ${reconciled} table-count reconciliations, all equal\n  ${timing.join('\n  ')}`,
  );
  await srv?.close();
  await t?.close();
});

const bodyRoutes = () => t.routes.filter((r) => r.method === 'post' || r.method === 'put' || r.method === 'patch');

describe('malformed bodies on every POST/PUT/PATCH route', () => {
  it('the inventory has body routes; JSON ones without a sample body are still fuzzed with generic garbage', () => {
    expect(bodyRoutes().length).toBeGreaterThanOrEqual(20);
    const specs = bodySpecs(ids);
    const unguided = bodyRoutes()
      .filter((r) => !bodySpecOf(specs, r) && !NO_JSON_BODY.has(keyOf(r)))
      .map(keyOf);
    if (unguided.length) console.warn(`fuzz: no sample body for ${unguided.join(', ')} (fuzzed with generic garbage only)`);
  });

  it('every one is refused with a 4xx in the error shape; nothing stored; the server stays up', async () => {
    const started = Date.now();
    const problems: string[] = [];
    const specs = bodySpecs(ids);
    for (const r of bodyRoutes()) {
      const key = keyOf(r);
      const spec = bodySpecOf(specs, r);
      const noBody = NO_JSON_BODY.has(key);
      covered.body.add(key);
      if (spec) covered.sampled.add(key);
      const agent = clientFor(srv, r);
      // Sign-in is throttled per address after 30 tries: its later replies are 429s (still 4xx, same shape).
      const runs = key === 'post /api/auth/sign-in' ? 40 : BODY_RUNS;
      const inputs: FuzzRequest[] = [...draw(malformedRequest(spec?.sample(), spec?.schema), `body ${key}`, runs), oversizedRequest()];
      const url = concretePath(r, ids);
      const before = await tableCounts(t.ctx.ds);
      await inPool(inputs, POOL, async (q, i) => {
        const t0 = Date.now();
        const res = await sendFuzz(agent, r.method, url, q);
        tally.add(q.kind);
        ms.set(q.kind, (ms.get(q.kind) ?? 0) + Date.now() - t0);
        // A route that takes no JSON body may ignore the garbage (and answer 2xx), never 5xx.
        const p = noBody && q.status === undefined ? replyProblems(res.status, res.body) : refusalProblems(res.status, res.body, q.status);
        if (p.length)
          problems.push(`${key} #${i} [${q.kind}] ${show(q.raw ?? q.json)}${q.contentType ? ` (${q.contentType})` : ''} → ${p.join('; ')}`);
      });
      const after = await tableCounts(t.ctx.ds);
      reconciled++;
      if (!sameCounts(before, after)) problems.push(`${key}: the database changed: ${JSON.stringify(before)} → ${JSON.stringify(after)}`);
      const health = await srv.clients.public.call('get', '/api/health');
      if (health.status !== 200) problems.push(`${key}: /api/health answered ${health.status} after the batch`);
    }
    timing.push(
      `malformed bodies: ${Date.now() - started} ms (request time per category: ${[...ms].map(([k, v]) => `${k} ${v} ms`).join(', ')})`,
    );
    failWith(problems);
  }, 120_000);

  it('no prototype was polluted by any of it', () => {
    const probe = {} as Record<string, unknown>;
    expect(probe.polluted).toBeUndefined();
    expect(probe.isAdmin).toBeUndefined();
    expect(Object.getOwnPropertyNames(Object.prototype)).not.toContain('polluted');
  });
});
