/**
 * The role × route matrix, generated from the routers themselves: every declared route answers
 * 401 signed out and 403 to each role it does not admit; a route added outside ApiRouter (so
 * without a declared guard) fails the inventory check.
 */
import request from 'supertest';
import { ROLES, type Role } from '../../shared/roles';
import { createTestApp, type TestApp } from '../support/api';

jest.setTimeout(120_000);

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t.close();
});

const SAMPLE_ID = '00000000-0000-4000-8000-000000000000';
const concrete = (path: string) => path.replace(/:[A-Za-z]+/g, (m) => (/code$/i.test(m) ? 'OV-99' : SAMPLE_ID));

describe('route inventory', () => {
  it('every Express route on every API router was declared through ApiRouter (so it has an access rule)', () => {
    for (const r of t.routers) {
      const stack = (r.router as unknown as { stack: Array<{ route?: { path: string; methods?: Record<string, boolean> } }> }).stack;
      const expressRoutes = stack
        .filter((l) => l.route)
        .map((l) => `${Object.keys(l.route!.methods ?? {})[0]} ${r.prefix}${l.route!.path}`);
      const declared = r.routes.map((d) => `${d.method} ${d.path}`);
      expect(expressRoutes.sort()).toEqual(declared.sort());
    }
  });

  it('lists a sensible number of routes, each with an explicit access rule', () => {
    expect(t.routes.length).toBeGreaterThanOrEqual(6);
    for (const r of t.routes) {
      expect(r.access === 'public' || r.access === 'signed-in' || (Array.isArray(r.access) && r.access.length > 0)).toBe(true);
    }
  });
});

describe('role × route matrix', () => {
  it('signed out: every non-public route answers 401', async () => {
    const failures: string[] = [];
    for (const r of t.routes.filter((x) => x.access !== 'public')) {
      const res = await request(t.app)[r.method](concrete(r.path)).send({});
      if (res.status !== 401 || res.body.error?.code !== 'unauthenticated') failures.push(`${r.method} ${r.path} → ${res.status}`);
    }
    expect(failures).toEqual([]);
  });

  it.each(ROLES)('signed in as %s: routes not admitting the role answer 403, the others do not', async (role: Role) => {
    const agent = await t.signIn(role);
    const failures: string[] = [];
    for (const r of t.routes) {
      if (r.path === '/api/auth/sign-out') continue; // would end this agent's session
      const res = await agent[r.method](concrete(r.path)).send({});
      const admitted = r.access === 'public' || r.access === 'signed-in' || r.access.includes(role);
      if (admitted && (res.status === 401 || (res.status === 403 && res.body.error?.message?.startsWith('This needs the')))) {
        failures.push(`${r.method} ${r.path} refused an admitted ${role}: ${res.status}`);
      }
      if (!admitted && (res.status !== 403 || res.body.error?.code !== 'forbidden')) {
        failures.push(`${r.method} ${r.path} let ${role} through: ${res.status}`);
      }
    }
    expect(failures).toEqual([]);
  });
});
