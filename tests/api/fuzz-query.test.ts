/**
 * API query fuzz, generated from the routers: every GET route gets hostile query strings (arrays,
 * nested keys, bad percent-encoding, NUL, NaN/Infinity as text, 10k values, prototype keys); GETs
 * that declare a query schema also get values that schema refuses, which must answer a 4xx.
 * Per route: never a 5xx, refusals in the error shape, no row changes, /api/health still 200.
 *
 * Node's HTTP parser refuses a request line over its header limit (16 KiB) with a bare 431 before
 * Express sees it; that reply is accepted here (it has no body to shape) and counted separately.
 */
import fc from 'fast-check';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import {
  clientFor,
  listenWithClients,
  type FuzzServer,
  concretePath,
  createFuzzFixtures,
  draw,
  failWith,
  FUZZ_SEED,
  hostileQueryString,
  hostileString,
  inPool,
  keyOf,
  QUERY_SPECS,
  refusalProblems,
  replyProblems,
  sameCounts,
  show,
  Tally,
  type FuzzIds,
} from '../support/fuzz';

const QUERY_RUNS = Number(process.env.EMBERLOT_FUZZ_QUERY_RUNS ?? 30);
const POOL = 6;

let t: TestApp;
let ids: FuzzIds;
let srv: FuzzServer;
const tally = new Tally();
const covered = { schema: new Set<string>(), any: new Set<string>() };
let reconciled = 0;
const timing: string[] = [];

beforeAll(async () => {
  t = await createTestApp();
  ids = await createFuzzFixtures(t);
  srv = await listenWithClients(t);
}, 30_000);

afterAll(async () => {
  console.log(
    `${tally.report(`API query fuzz (seed ${FUZZ_SEED})`)}\n  routes: ${covered.any.size} GET routes, ${covered.schema.size} with a query schema; ${reconciled} table-count reconciliations, all equal\n  ${timing.join('\n  ')}`,
  );
  await srv?.close();
  await t?.close();
});

// The live stream holds its response open; its refusal without the event-stream Accept is covered by the floor suite.
const getRoutes = () => t.routes.filter((r) => r.method === 'get' && r.path !== '/api/floor/stream');
/** A bare 431 comes from Node's HTTP parser (request line over 16 KiB), before the app. */
const nodeHeaderLimit = (status: number) => status === 431;

describe('hostile query strings on every GET route', () => {
  it('values the declared query schema refuses answer a 4xx in the error shape', async () => {
    const started = Date.now();
    const problems: string[] = [];
    for (const r of getRoutes()) {
      const key = keyOf(r);
      const schema = QUERY_SPECS[key];
      if (!schema) continue;
      covered.schema.add(key);
      const fields = Object.keys((schema as unknown as { shape?: Record<string, unknown> }).shape ?? {});
      const arb = fc
        .dictionary(
          fc.constantFrom(...fields, 'unknownKey', '__proto__'),
          fc.oneof(hostileString, fc.constantFrom('NaN', 'Infinity', '-1e308', '1e308', '-274', '1.5', '')),
          { minKeys: 1, maxKeys: 3 },
        )
        .map((o) => Object.fromEntries(Object.entries(o).map(([k, v]) => [k, v.replace(/[\uD800-\uDFFF]/g, '\uFFFD')])))
        .filter((o) => !schema.safeParse(o).success);
      const inputs = draw(arb, `query ${key}`, QUERY_RUNS).map((o) => new URLSearchParams(o).toString());
      const agent = clientFor(srv, r);
      const url = concretePath(r, ids);
      const before = await tableCounts(t.ctx.ds);
      await inPool(inputs, POOL, async (qs, i) => {
        const res = await agent.call('get', `${url}?${qs}`);
        if (nodeHeaderLimit(res.status)) return tally.add('query: refused by the HTTP parser (431, > 16 KiB)');
        tally.add('query: values the schema refuses');
        const p = refusalProblems(res.status, res.body);
        if (p.length) problems.push(`${key} #${i} ?${show(qs)} → ${p.join('; ')}`);
      });
      reconciled++;
      if (!sameCounts(before, await tableCounts(t.ctx.ds))) problems.push(`${key}: the database changed`);
    }
    expect(covered.schema.size).toBeGreaterThanOrEqual(10);
    timing.push(`schema-refused queries: ${Date.now() - started} ms`);
    failWith(problems);
  }, 120_000);

  it('any hostile query on any GET: never a 5xx, refusals in the error shape, nothing stored, server up', async () => {
    const started = Date.now();
    const problems: string[] = [];
    for (const r of getRoutes()) {
      const key = keyOf(r);
      covered.any.add(key);
      const agent = clientFor(srv, r);
      const url = concretePath(r, ids);
      const inputs = draw(hostileQueryString, `anyquery ${key}`, QUERY_RUNS);
      const before = await tableCounts(t.ctx.ds);
      await inPool(inputs, POOL, async (qs, i) => {
        const res = await agent.call('get', `${url}?${qs}`);
        if (nodeHeaderLimit(res.status)) return tally.add('query: refused by the HTTP parser (431, > 16 KiB)');
        tally.add('query: hostile strings on any GET');
        const p = replyProblems(res.status, res.body);
        if (p.length) problems.push(`${key} #${i} ?${show(qs)} → ${p.join('; ')}`);
      });
      reconciled++;
      if (!sameCounts(before, await tableCounts(t.ctx.ds))) problems.push(`${key}: the database changed`);
      const health = await srv.clients.public.call('get', '/api/health');
      if (health.status !== 200) problems.push(`${key}: /api/health answered ${health.status}`);
    }
    timing.push(`hostile queries: ${Date.now() - started} ms`);
    failWith(problems);
  }, 120_000);
});
