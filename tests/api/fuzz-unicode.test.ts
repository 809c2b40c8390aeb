/**
 * Hostile strings in otherwise valid bodies, on the create and check routes: NUL, RTL marks, emoji,
 * lone surrogates, BOMs, 10k-character strings, injections. What the schema refuses, or what holds a
 * character PostgreSQL cannot store (NUL, lone surrogate), is refused with a 4xx and changes
 * nothing; the rest may be stored (a name with an emoji is a name) but never answers a 5xx.
 */
import fc from 'fast-check';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import {
  bodySpecOf,
  bodySpecs,
  clientFor,
  concretePath,
  createFuzzFixtures,
  draw,
  failWith,
  findUnstorableInTest,
  FUZZ_SEED,
  hostileString,
  inPool,
  keyOf,
  listenWithClients,
  pathsOf,
  refusalProblems,
  replyProblems,
  sameCounts,
  sendFuzz,
  show,
  Tally,
  type FuzzIds,
  type FuzzServer,
} from '../support/fuzz';

const UNICODE_RUNS = Number(process.env.EMBERLOT_FUZZ_UNICODE_RUNS ?? 20);
const POOL = 6;

let t: TestApp;
let ids: FuzzIds;
let srv: FuzzServer;
const tally = new Tally();
let reconciled = 0;
const timing: string[] = [];

beforeAll(async () => {
  t = await createTestApp();
  ids = await createFuzzFixtures(t);
  srv = await listenWithClients(t);
}, 30_000);

afterAll(async () => {
  console.log(
    `${tally.report(`API unicode fuzz (seed ${FUZZ_SEED})`)}\n  ${reconciled} table-count reconciliations, all equal\n  ${timing.join('\n  ')}`,
  );
  await srv?.close();
  await t?.close();
});

describe('hostile strings in otherwise valid bodies', () => {
  it('NUL, RTL marks, emoji, lone surrogates or 10k characters in otherwise valid bodies: never a 5xx; refused ones change nothing', async () => {
    const started = Date.now();
    const problems: string[] = [];
    const specs = bodySpecs(ids);
    // Creates and checks (not sign-in, user edits, revocation or run actions, which need a state to act on).
    const targets = t.routes.filter(
      (r) => bodySpecOf(specs, r) && r.method !== 'put' && !/sign-in|\/users\/:id|revoke|\/runs/.test(r.path),
    );
    for (const r of targets) {
      const key = keyOf(r);
      const spec = bodySpecOf(specs, r)!;
      const sample = spec.sample();
      const leafAt = (p: Array<string | number>) => p.reduce<unknown>((n, k) => (n as Record<string | number, unknown>)[k], sample);
      const stringPaths = pathsOf(sample).filter((p) => typeof leafAt(p) === 'string');
      if (!stringPaths.length) continue;
      const arb = fc.tuple(fc.constantFrom(...stringPaths), hostileString).map(([p, str]) => {
        const copy = JSON.parse(JSON.stringify(sample));
        let node = copy;
        for (const k of p.slice(0, -1)) node = node[k];
        node[p[p.length - 1]] = str;
        return copy as unknown;
      });
      const inputs = draw(arb, `unicode ${key}`, UNICODE_RUNS);
      // Bodies the schema refuses or that hold unstorable characters must be refused, changing nothing…
      const bad = inputs.filter((b) => !spec.schema.safeParse(b).success || findUnstorableInTest(b));
      // …the others (RTL marks, emoji, long names within limits) may be stored: never a 5xx.
      const fine = inputs.filter((b) => !bad.includes(b));
      const agent = clientFor(srv, r);
      const url = concretePath(r, ids);
      const before = await tableCounts(t.ctx.ds);
      await inPool(bad, POOL, async (json, i) => {
        const res = await sendFuzz(agent, r.method, url, { kind: 'unicode', json });
        tally.add('unicode in otherwise valid bodies (refused)');
        const p = refusalProblems(res.status, res.body);
        if (p.length) problems.push(`${key} bad #${i} ${show(json)} → ${p.join('; ')}`);
      });
      reconciled++;
      if (!sameCounts(before, await tableCounts(t.ctx.ds))) problems.push(`${key}: refused unicode bodies changed the database`);
      for (const [i, json] of fine.entries()) {
        const res = await sendFuzz(agent, r.method, url, { kind: 'unicode', json });
        tally.add('unicode in otherwise valid bodies (may be stored)');
        const p = replyProblems(res.status, res.body);
        if (p.length) problems.push(`${key} fine #${i} ${show(json)} → ${p.join('; ')}`);
      }
      const health = await srv.clients.public.call('get', '/api/health');
      if (health.status !== 200) problems.push(`${key}: /api/health answered ${health.status}`);
    }
    timing.push(`unicode in valid bodies: ${Date.now() - started} ms`);
    failWith(problems);
  }, 120_000);
});
