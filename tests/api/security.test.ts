/**
 * Access and session security: session fixation, cookie flags, passwords never logged or audited,
 * security headers, upload file names that cannot escape their folder. Secure cookies and
 * brute-force throttling (per address and per account): tests/api/security-throttle.test.ts. The role × route matrix is tests/api/access.test.ts; a rig's MQTT
 * credentials confined to its own topics is tests/broker/broker-auth.test.ts.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import request from 'supertest';
import { SESSION_COOKIE } from '../../server/http/route';
import { AuditLogEntity, MeasurementUploadEntity } from '../../server/db/entities';
import { apiErrorSchema } from '../../shared/schemas/errors';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import { createRunFixture } from '../support/fuzz';

const sidOf = (res: { headers: Record<string, unknown> }): string | null => {
  const cookies = (res.headers['set-cookie'] as string[] | undefined) ?? [];
  const c = cookies.find((x) => x.startsWith(`${SESSION_COOKIE}=`));
  return c ? c.split(';')[0].slice(SESSION_COOKIE.length + 1) : null;
};
const setCookieOf = (res: { headers: Record<string, unknown> }) =>
  ((res.headers['set-cookie'] as string[] | undefined) ?? []).find((x) => x.startsWith(`${SESSION_COOKIE}=`)) ?? '';
const signIn = (app: TestApp['app'], email: string, password: string, cookie?: string) => {
  const r = request(app).post('/api/auth/sign-in');
  if (cookie) r.set('Cookie', `${SESSION_COOKIE}=${cookie}`);
  return r.send({ email, password });
};

// One app per file: passport is a process-wide singleton, so a second app in the same file would take
// over the sign-in strategy. Secure cookies, lockout and throttling: tests/api/security-throttle.test.ts.
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});

describe('sessions', () => {
  it('the session id changes at sign-in (no fixation): a planted or earlier id is never adopted, and the old one is dead', async () => {
    const first = await signIn(t.app, emailFor('operator'), TEST_PASSWORD);
    expect(first.status).toBe(200);
    const a = sidOf(first)!;
    expect(a).toBeTruthy();
    // Sign in again presenting session A (as an attacker who planted it would): a new id comes back.
    const second = await signIn(t.app, emailFor('operator'), TEST_PASSWORD, a);
    const b = sidOf(second)!;
    expect(b).toBeTruthy();
    expect(b).not.toBe(a);
    const me = (sid: string) => request(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${sid}`);
    expect((await me(b)).status).toBe(200);
    expect((await me(a)).status).toBe(401);
    // A made-up id is not adopted either.
    const planted = 's%3Aattacker-chosen-session-id.0000000000000000000000000000000000000000000';
    const third = await signIn(t.app, emailFor('operator'), TEST_PASSWORD, planted);
    expect(sidOf(third)).not.toBe(planted);
    expect((await me(planted)).status).toBe(401);
  });

  it('sign-out ends the session on the server (the old cookie is refused afterwards)', async () => {
    const res = await signIn(t.app, emailFor('engineer'), TEST_PASSWORD);
    const sid = sidOf(res)!;
    await request(t.app).post('/api/auth/sign-out').set('Cookie', `${SESSION_COOKIE}=${sid}`).expect(204);
    const after = await request(t.app).get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${sid}`);
    expect(after.status).toBe(401);
    expect(after.body.error.message).toMatch(/session has ended/);
  });

  it('the cookie is HttpOnly and SameSite=Lax; not Secure on the plain-http loopback demo', async () => {
    const c = setCookieOf(await signIn(t.app, emailFor('manager'), TEST_PASSWORD));
    expect(c).toMatch(/;\s*HttpOnly/i);
    expect(c).toMatch(/;\s*SameSite=Lax/i);
    expect(c).not.toMatch(/;\s*Secure/i);
    expect(c).toMatch(/;\s*Path=\//i);
  });
});

describe('passwords are never logged, echoed or audited', () => {
  const SECRET = 'Harrowgate-Kiln-7731-plum';
  const NEW_SECRET = 'Oven-Door-Quartz-5520-teal';

  it('across user creation, sign-in (good, wrong, malformed), a password change and a failing request', async () => {
    const methods = ['log', 'info', 'warn', 'error', 'debug', 'trace'] as const;
    const spies = methods.map((m) => jest.spyOn(console, m).mockImplementation(() => undefined));
    const stdout = jest.spyOn(process.stdout, 'write');
    const stderr = jest.spyOn(process.stderr, 'write');
    const bodies: string[] = [];
    try {
      const admin = await t.signIn('admin');
      const created = await admin
        .post('/api/users')
        .send({ email: 'kiln.keeper@test.example', name: 'Kiln Keeper', role: 'operator', password: SECRET });
      expect(created.status).toBe(201);
      bodies.push(JSON.stringify(created.body));
      for (const pw of [SECRET, `${SECRET}-wrong`, `${SECRET}\u0000`, SECRET.repeat(20)]) {
        const r = await signIn(t.app, 'kiln.keeper@test.example', pw);
        bodies.push(JSON.stringify(r.body));
      }
      // A duplicate user (409) and a too-short password (400) carry the password in the request too.
      bodies.push(
        JSON.stringify(
          (await admin.post('/api/users').send({ email: 'kiln.keeper@test.example', name: 'Again', role: 'operator', password: SECRET }))
            .body,
        ),
      );
      bodies.push(JSON.stringify((await admin.patch(`/api/users/${created.body.id}`).send({ password: NEW_SECRET })).body));
      bodies.push(JSON.stringify((await signIn(t.app, 'kiln.keeper@test.example', NEW_SECRET)).body));
      bodies.push(
        JSON.stringify(
          (await admin.post('/api/users').send({ email: 'x@test.example', name: 'X', role: 'nobody', password: NEW_SECRET })).body,
        ),
      );
    } finally {
      const logged = [...spies, stdout, stderr].flatMap((s) =>
        s.mock.calls.map((c) => c.map((a) => (typeof a === 'string' ? a : (JSON.stringify(a) ?? String(a)))).join(' ')),
      );
      spies.forEach((s) => s.mockRestore());
      stdout.mockRestore();
      stderr.mockRestore();
      for (const secret of [SECRET, NEW_SECRET]) {
        expect(logged.filter((l) => l.includes(secret))).toEqual([]);
        expect(bodies.filter((b) => b.includes(secret))).toEqual([]);
      }
    }
    const audit: Array<{ t: string }> = await t.ctx.ds.query(`SELECT row_to_json(a)::text AS t FROM audit_log a`);
    expect(audit.length).toBeGreaterThan(0);
    expect(audit.filter((r) => r.t.includes(SECRET) || r.t.includes(NEW_SECRET))).toEqual([]);
    const stored: Array<{ t: string }> = await t.ctx.ds.query(`SELECT row_to_json(u)::text AS t FROM users u`);
    expect(stored.filter((r) => r.t.includes(SECRET) || r.t.includes(NEW_SECRET))).toEqual([]);
  });
});

describe('security headers', () => {
  it.each([
    ['a success', '/api/health', 200],
    ['an API error', '/api/no-such-route', 404],
    ['a refusal', '/api/users', 401],
  ])('on %s (%s): CSP with frame-ancestors none, nosniff, X-Frame-Options, no x-powered-by, no caching', async (_what, url, status) => {
    const res = await request(t.app).get(url);
    expect(res.status).toBe(status);
    const csp = String(res.headers['content-security-policy']);
    expect(csp).toMatch(/default-src 'self'/);
    expect(csp).toMatch(/frame-ancestors 'none'/);
    expect(csp).toMatch(/object-src 'none'/);
    expect(csp).toMatch(/script-src 'self'(;|$)/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-frame-options']).toBe('SAMEORIGIN');
    expect(res.headers['x-powered-by']).toBeUndefined();
    expect(res.headers['referrer-policy']).toBe('no-referrer');
    expect(res.headers['strict-transport-security']).toMatch(/max-age=\d+/);
    expect(res.headers['cross-origin-opener-policy']).toBe('same-origin');
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('errors carry no stack trace and no server internals', async () => {
    const res = await request(t.app).post('/api/auth/sign-in').set('Content-Type', 'application/json').send('{"email":');
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.(ts|js):\d+|node_modules|SyntaxError/);
  });
});

describe('upload file names cannot escape their folder', () => {
  let runId: string;
  let lotId: string;
  const HOSTILE_NAMES = [
    '../../etc/passwd',
    '..\\..\\windows\\win.ini',
    '/etc/shadow',
    '....//....//evil.csv',
    'C:\\temp\\x.csv',
    'con.csv',
    'a/../../../../tmp/pwned.csv',
  ];

  beforeAll(async () => {
    ({ runId, lotId } = await createRunFixture(t, 'SEC'));
  });

  const uploadDir = () => path.resolve(t.ctx.config.uploadDir);
  const filesUnder = (dir: string): string[] => (fs.existsSync(dir) ? fs.readdirSync(dir, { recursive: true }).map(String) : []);

  it('lot serial lists: the stored file name is a bare name (no directories, no ".."), nothing written to disk', async () => {
    const eng = await t.signIn('engineer');
    const before = filesUnder(uploadDir());
    for (const [k, name] of HOSTILE_NAMES.entries()) {
      const res = await eng
        .post(`/api/lots/${lotId}/serials/csv`)
        .attach('file', Buffer.from(`serial\nSEC${k}\n`), { filename: name, contentType: 'text/csv' });
      expect([res.status, res.body.error]).toEqual([200, undefined]);
    }
    const audits = await t.ctx.ds.getRepository(AuditLogEntity).findBy({ action: 'lot.serials.add', entityId: lotId });
    const names = audits.map((a) => String((a.details as { fileName?: string }).fileName));
    expect(names).toHaveLength(HOSTILE_NAMES.length);
    for (const n of names) {
      expect(n).not.toMatch(/[/\\]/);
      expect(n).not.toMatch(/^\.\.?$/);
      expect(n).not.toContain('\u0000');
    }
    expect(filesUnder(uploadDir())).toEqual(before);
    expect(fs.existsSync('/tmp/pwned.csv')).toBe(false);
  });

  it('measurement files: the stored file name is a bare name; a NUL in the name is refused with a 4xx and stores nothing', async () => {
    // Time zero after Start is an engineer's entry with a reason (shared/domain/records.ts).
    const op = await t.signIn('engineer');
    const HEADER = 'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_a,icbo_vcb_v,vcesat_v,temp_c,measured_at';
    const file = (k: number) => `${HEADER}\n${`C00${k + 1}`},${120 + k},0.15,5,20e-9,112,0.22,25,2025-12-31T20:00:00Z\n`;
    for (const [k, name] of HOSTILE_NAMES.slice(0, 5).entries()) {
      const res = await op
        .post(`/api/measurements/runs/${runId}/read-points/0/upload`)
        .field('reason', 'Time zero entered after Start for this check')
        .attach('file', Buffer.from(file(k)), { filename: name, contentType: 'text/csv' });
      expect(res.status).toBe(201);
    }
    const stored = await t.ctx.ds.getRepository(MeasurementUploadEntity).findBy({ runId });
    expect(stored).toHaveLength(5);
    for (const u of stored) {
      expect(u.fileName).not.toMatch(/[/\\]/);
      expect(u.fileName).not.toMatch(/^\.\.?$/);
    }
    const before = await tableCounts(t.ctx.ds);
    const nul = await op
      .post(`/api/measurements/runs/${runId}/read-points/0/upload`)
      .field('reason', 'Time zero entered after Start for this check')
      .attach('file', Buffer.from(file(6)), { filename: 'rp0\u0000.csv', contentType: 'text/csv' });
    expect(nul.status).toBeGreaterThanOrEqual(400);
    expect(nul.status).toBeLessThan(500);
    expect(apiErrorSchema.safeParse(nul.body).success).toBe(true);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });
});
