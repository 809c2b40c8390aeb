/**
 * Security hardening, HTTP side (issue #18, points 2, 8, 9 and 10), against the real Express app
 * and PostgreSQL:
 *  2. a state-changing request whose Origin (or Referer) is not the app's own is refused, body-less
 *     POSTs and multipart uploads included, and changes nothing;
 *  8. a malformed percent-encoding in a route parameter answers 400, not 500 with a stack trace;
 *  9. EMBERLOT_TRUST_PROXY: secure cookies behind a TLS proxy, the sign-in limit per client address;
 * 10. non-ASCII upload file names stored as sent, one sign-in answer whether or not the account
 *     exists or is locked, failed SQL logged without its parameters.
 * The same two attacks through real Chromium: tests/api/security-browser.test.ts. Secrets (point 1):
 * tests/api/secrets.test.ts.
 */
import request from 'supertest';
import { parsePublicOrigins, parseTrustProxy } from '../../server/config';
import { AuditLogEntity, RigEntity, UserEntity } from '../../server/db/entities';
import { SESSION_COOKIE } from '../../server/http/route';
import { SIGN_IN_MAX_PER_WINDOW } from '../../server/modules/auth/auth.routes';
import { LOCKOUT_AFTER, SIGN_IN_REFUSED } from '../../server/modules/auth/auth.service';
import type { RigLink } from '../../server/modules/telemetry/contracts';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';
import { insertTestRig, tableCounts } from '../support/db';
import { createRunFixture } from '../support/fuzz';

const fakeLink: RigLink = { send: async () => ({ ok: true }) as never, connected: () => true, revoke: async () => true };

/** Everything printed to the console while `fn` runs (console.* is what the server logs through). */
async function captureConsole<T>(fn: () => Promise<T>): Promise<{ out: T; text: string }> {
  const lines: string[] = [];
  const spies = (['log', 'info', 'warn', 'error', 'debug'] as const).map((m) =>
    jest.spyOn(console, m).mockImplementation((...args: unknown[]) => {
      lines.push(
        args.map((a) => (typeof a === 'string' ? a : a instanceof Error ? `${a.stack} ${JSON.stringify(a)}` : JSON.stringify(a))).join(' '),
      );
    }),
  );
  try {
    const out = await fn();
    return { out, text: lines.join('\n') };
  } finally {
    for (const s of spies) s.mockRestore();
  }
}

describe('point 2: cross-site state changes are refused (OWASP CSRF cheat sheet: verify Origin / Referer)', () => {
  let t: TestApp;
  let rigCode: string;
  beforeAll(async () => {
    t = await createTestApp({ publicOrigins: ['https://emberlot.lab.example'] });
    t.ctx.services.rigLink = fakeLink;
    rigCode = 'XS-01';
    await insertTestRig(t.ctx.ds, rigCode);
  });
  afterAll(async () => {
    await t?.close();
  });

  const HOST = 'emberlot.test:4780';
  const OWN = `http://${HOST}`;
  const FOREIGN = 'http://emberlot.test:5555'; // same host, another port: same site, another origin

  it('a body-less POST that rotates a rig secret, sent from another port of the same host, is refused and changes nothing', async () => {
    const admin = await t.signIn('admin');
    const before = await tableCounts(t.ctx.ds);
    const hashBefore = (await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: rigCode })).mqttSecretHash;
    const res = await admin.post(`/api/rigs/${rigCode}/credentials`).set('Host', HOST).set('Origin', FOREIGN);
    expect(res.status).toBe(403);
    expect(res.body.error).toEqual({
      code: 'forbidden',
      message: `Cross-site request refused: changes are only accepted from Emberlot's own pages (${OWN}), not from ${FOREIGN}.`,
    });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: rigCode })).mqttSecretHash).toBe(hashBefore);
  });

  it("the same POST from the app's own origin goes through (and the secret changes)", async () => {
    const admin = await t.signIn('admin');
    const hashBefore = (await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: rigCode })).mqttSecretHash;
    const res = await admin.post(`/api/rigs/${rigCode}/credentials`).set('Host', HOST).set('Origin', OWN);
    expect(res.status).toBe(200);
    expect((await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: rigCode })).mqttSecretHash).not.toBe(hashBefore);
  });

  it('a multipart upload with a foreign Origin is refused before the file is read, and stores nothing', async () => {
    const { lotId } = await createRunFixture(t, 'XS');
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng
      .post(`/api/lots/${lotId}/serials/csv`)
      .set('Origin', 'http://127.0.0.1:5555')
      .attach('file', Buffer.from('serial\nXS9001\nXS9002\n'), { filename: 'serials.csv', contentType: 'text/csv' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('forbidden');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('without Origin, a foreign Referer is refused (PATCH) and the own Referer accepted', async () => {
    const admin = await t.signIn('admin');
    const op = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('operator') });
    const bad = await admin
      .patch(`/api/users/${op.id}`)
      .set('Host', HOST)
      .set('Referer', `${FOREIGN}/attack.html`)
      .send({ name: 'Changed By Attacker' });
    expect(bad.status).toBe(403);
    expect((await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ id: op.id })).name).toBe('Test operator');
    const good = await admin
      .patch(`/api/users/${op.id}`)
      .set('Host', HOST)
      .set('Referer', `${OWN}/people`)
      .send({ name: 'Test operator two' });
    expect(good.status).toBe(200);
  });

  it('a DELETE and a sign-in (login CSRF) from a foreign origin are refused; Origin "null" is refused', async () => {
    const admin = await t.signIn('admin');
    const del = await admin
      .delete(`/api/rigs/${rigCode}/maintenance/00000000-0000-4000-8000-000000000000`)
      .set('Origin', 'https://evil.example');
    expect(del.status).toBe(403);
    const signIn = await request(t.app)
      .post('/api/auth/sign-in')
      .set('Origin', 'https://evil.example')
      .send({ email: emailFor('admin'), password: TEST_PASSWORD });
    expect(signIn.status).toBe(403);
    expect(signIn.headers['set-cookie']).toBeUndefined();
    const nul = await admin.post('/api/auth/sign-out').set('Origin', 'null');
    expect(nul.status).toBe(403);
    expect((await admin.get('/api/auth/me')).status).toBe(200); // still signed in
  });

  it('neither Origin nor Referer: a browser marks it Sec-Fetch-Site and is refused; a non-browser client (no headers) is served', async () => {
    const admin = await t.signIn('admin');
    const op = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('operator') });
    const marked = await admin.patch(`/api/users/${op.id}`).set('Sec-Fetch-Site', 'same-site').send({ name: 'Changed By Attacker' });
    expect(marked.status).toBe(403);
    const plain = await admin.patch(`/api/users/${op.id}`).send({ name: 'Test operator' });
    expect(plain.status).toBe(200);
  });

  it('an origin listed in EMBERLOT_PUBLIC_ORIGIN is accepted (a proxy that rewrites Host); reads are never checked', async () => {
    const admin = await t.signIn('admin');
    const op = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('operator') });
    const res = await admin
      .patch(`/api/users/${op.id}`)
      .set('Host', '10.0.0.5:4780')
      .set('Origin', 'https://emberlot.lab.example')
      .send({ name: 'Test operator' });
    expect(res.status).toBe(200);
    expect((await admin.get('/api/users').set('Origin', 'https://evil.example')).status).toBe(200);
    expect(parsePublicOrigins('https://a.example, http://b.example:8080')).toEqual(['https://a.example', 'http://b.example:8080']);
    expect(() => parsePublicOrigins('https://a.example/path')).toThrow(/not an origin/);
  });
});

describe('point 8: malformed percent-encoding in the address', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t?.close();
  });

  it('/api/plans/%ZZ answers 400 without a cookie and signed in, and logs no stack trace', async () => {
    const { out, text } = await captureConsole(async () => {
      const anon = await request(t.app).get('/api/plans/%ZZ');
      const eng = await (await t.signIn('engineer')).get('/api/plans/%E0%A4%A');
      const admin = await (await t.signIn('admin')).patch('/api/users/%ZZ').send({ name: 'x' });
      return [anon, eng, admin];
    });
    for (const res of out) {
      expect(res.status).toBe(400);
      expect(res.body).toEqual({
        error: {
          code: 'bad_request',
          message: 'The address holds a malformed percent-encoding (a % not followed by two hex digits, or bytes that are not UTF-8).',
        },
      });
    }
    expect(text).not.toMatch(/URIError|failed:/);
  });
});

describe('point 9: EMBERLOT_TRUST_PROXY', () => {
  it('parses a hop count, names and subnets; off by default; refuses "true" and nonsense', () => {
    expect(parseTrustProxy(undefined)).toBe(false);
    expect(parseTrustProxy('')).toBe(false);
    expect(parseTrustProxy('0')).toBe(false);
    expect(parseTrustProxy('1')).toBe(1);
    expect(parseTrustProxy('loopback, 10.0.0.0/8, fd00::/8')).toEqual(['loopback', '10.0.0.0/8', 'fd00::/8']);
    expect(() => parseTrustProxy('true')).toThrow(/would trust X-Forwarded-For from any client/);
    expect(() => parseTrustProxy('10.0.0.0/33')).toThrow(/"10.0.0.0\/33" is not a proxy address/);
    expect(() => parseTrustProxy('my-proxy')).toThrow(/is not a proxy address/);
  });

  describe('one proxy in front (trustProxy 1) with secure cookies', () => {
    let t: TestApp;
    beforeAll(async () => {
      t = await createTestApp({ trustProxy: 1, secureCookies: true });
    });
    afterAll(async () => {
      await t?.close();
    });

    it('a sign-in the proxy received over https gets a Secure cookie, and the session works', async () => {
      const res = await request(t.app)
        .post('/api/auth/sign-in')
        .set('X-Forwarded-Proto', 'https')
        .send({ email: emailFor('admin'), password: TEST_PASSWORD });
      expect(res.status).toBe(200);
      const cookie =
        ((res.headers['set-cookie'] as unknown as string[] | undefined) ?? []).find((c) => c.startsWith(`${SESSION_COOKIE}=`)) ?? '';
      expect(cookie).toMatch(/;\s*Secure/i);
      const me = await request(t.app).get('/api/auth/me').set('X-Forwarded-Proto', 'https').set('Cookie', cookie.split(';')[0]);
      expect(me.status).toBe(200);
      // The browser's Origin is https (the proxy's); Express sees https through X-Forwarded-Proto.
      const out = await request(t.app)
        .post('/api/auth/sign-out')
        .set('X-Forwarded-Proto', 'https')
        .set('Host', 'emberlot.lab.example')
        .set('Origin', 'https://emberlot.lab.example')
        .set('Cookie', cookie.split(';')[0]);
      expect(out.status).toBe(204);
    });

    it(`the sign-in limit (${SIGN_IN_MAX_PER_WINDOW} per window) counts per client address, not per proxy`, async () => {
      const from = (ip: string) =>
        request(t.app)
          .post('/api/auth/sign-in')
          .set('X-Forwarded-For', ip)
          .send({ email: 'nobody@test.example', password: 'wrong-password' });
      const statuses: number[] = [];
      for (let k = 0; k <= SIGN_IN_MAX_PER_WINDOW; k++) statuses.push((await from('203.0.113.7')).status);
      expect(statuses.slice(0, SIGN_IN_MAX_PER_WINDOW).every((s) => s === 401)).toBe(true);
      expect(statuses[SIGN_IN_MAX_PER_WINDOW]).toBe(429);
      // Another client behind the same proxy is not throttled.
      expect((await from('203.0.113.8')).status).toBe(401);
    }, 90_000);
  });

  describe('no proxy configured (the default)', () => {
    let t: TestApp;
    beforeAll(async () => {
      t = await createTestApp();
    });
    afterAll(async () => {
      await t?.close();
    });

    it('X-Forwarded-For is ignored: a client cannot pick a new address to escape the limit', async () => {
      const statuses: number[] = [];
      // express-rate-limit logs once that X-Forwarded-For came without a trusted proxy: the hint an
      // operator behind a proxy needs (set EMBERLOT_TRUST_PROXY).
      const { text } = await captureConsole(async () => {
        for (let k = 0; k <= SIGN_IN_MAX_PER_WINDOW; k++) {
          const r = await request(t.app)
            .post('/api/auth/sign-in')
            .set('X-Forwarded-For', `198.51.100.${k + 1}`)
            .send({ email: 'nobody@test.example', password: 'wrong-password' });
          statuses.push(r.status);
        }
      });
      expect(statuses[SIGN_IN_MAX_PER_WINDOW]).toBe(429);
      expect(text).toMatch(/ERR_ERL_UNEXPECTED_X_FORWARDED_FOR/);
    }, 90_000);
  });
});

describe('point 10: file names, the lockout answer, failed SQL in the log', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t?.close();
  });

  it('a non-ASCII upload file name is stored as sent (Prüfung, not PrÃ¼fung)', async () => {
    const { lotId } = await createRunFixture(t, 'FN');
    const eng = await t.signIn('engineer');
    const name = 'Prüfung Los Ä-Ø-ß №7 温度.csv';
    const res = await eng
      .post(`/api/lots/${lotId}/serials/csv`)
      .attach('file', Buffer.from('serial\nFN9001\nFN9002\n'), { filename: name, contentType: 'text/csv' });
    expect(res.status).toBe(200);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'lot.serials.add', entityId: lotId });
    expect((audit.details as { fileName: string }).fileName).toBe(name);
  });

  it(`an unknown e-mail and an existing account get the same answer at every attempt, through and after the lock (${LOCKOUT_AFTER} wrong passwords)`, async () => {
    const known = 'lock-probe@test.example';
    const u = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('manager') });
    await t.ctx.ds.getRepository(UserEntity).insert({ email: known, name: 'Lock Probe', role: 'manager', passwordHash: u.passwordHash });
    const attempt = (email: string, password: string) => request(t.app).post('/api/auth/sign-in').send({ email, password });
    for (let k = 1; k <= LOCKOUT_AFTER + 2; k++) {
      const a = await attempt(known, `wrong-${k}`);
      const b = await attempt('no-such-person@test.example', `wrong-${k}`);
      expect([a.status, a.body]).toEqual([401, { error: { code: 'unauthenticated', message: SIGN_IN_REFUSED } }]);
      expect([b.status, b.body]).toEqual([a.status, a.body]);
    }
    // Locked: even the right password gets the same answer (no oracle while the lock holds).
    const right = await attempt(known, TEST_PASSWORD);
    expect([right.status, right.body]).toEqual([401, { error: { code: 'unauthenticated', message: SIGN_IN_REFUSED } }]);
    expect((await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: known })).lockedUntil).not.toBeNull();
  });

  it('a failed INSERT is logged with its SQL state and statement but without the values (e-mail, name, password hash)', async () => {
    // A trigger makes the real INSERT fail inside PostgreSQL, as a constraint added later would.
    await t.ctx.ds.query(
      `CREATE FUNCTION refuse_users() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'users are frozen for this test'; END $$`,
    );
    await t.ctx.ds.query(`CREATE TRIGGER refuse_users BEFORE INSERT ON users FOR EACH ROW EXECUTE FUNCTION refuse_users()`);
    try {
      const admin = await t.signIn('admin');
      const { out: res, text } = await captureConsole(() =>
        admin
          .post('/api/users?ref=ada.quietly%40private.example')
          .send({ email: 'ada.quietly@private.example', name: 'Ada Quietly-Private', role: 'operator', password: 'a-long-password-1' }),
      );
      expect(res.status).toBe(500);
      expect(res.body.error.code).toBe('internal');
      expect(text).toMatch(
        /\[db\] query failed: \w+: users are frozen for this test; SQL state P0001; statement: INSERT INTO "users"\("id", "email", "name", "role", "password_hash".* VALUES \(DEFAULT, \$1, \$2, \$3, \$4,/,
      );
      expect(text).toMatch(/\[api\] POST \/api\/users failed: QueryFailedError: users are frozen for this test; SQL state P0001/);
      expect(text).not.toMatch(/ada\.quietly|Quietly-Private|\$2[aby]\$|PARAMETERS/i);
    } finally {
      await t.ctx.ds.query(`DROP TRIGGER refuse_users ON users`);
      await t.ctx.ds.query(`DROP FUNCTION refuse_users()`);
    }
  });
});
