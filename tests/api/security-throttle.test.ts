/**
 * Brute force and secure cookies, on an app of its own (a fresh per-address sign-in limiter, and
 * config.secureCookies on, as EMBERLOT_SECURE_COOKIES=1 sets it): the cookie is Secure, an account
 * locks after LOCKOUT_AFTER wrong passwords, an address is throttled after SIGN_IN_MAX_PER_WINDOW
 * attempts with a 429 in the error shape.
 */
import * as http from 'node:http';
import request from 'supertest';
import { AuditLogEntity } from '../../server/db/entities';
import { SESSION_COOKIE } from '../../server/http/route';
import { SIGN_IN_MAX_PER_WINDOW } from '../../server/modules/auth/auth.routes';
import { LOCKOUT_AFTER, SIGN_IN_REFUSED } from '../../server/modules/auth/auth.service';
import { apiErrorSchema } from '../../shared/schemas/errors';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';

const cookieOf = (res: { headers: Record<string, unknown> }) =>
  ((res.headers['set-cookie'] as string[] | undefined) ?? []).find((x) => x.startsWith(`${SESSION_COOKIE}=`)) ?? '';
const sidOf = (res: { headers: Record<string, unknown> }) =>
  cookieOf(res)
    .split(';')[0]
    .slice(SESSION_COOKIE.length + 1) || null;
const setCookieOf = cookieOf;

describe('a fresh app with EMBERLOT_SECURE_COOKIES=1: Secure cookie, account lockout, address throttling', () => {
  let s: TestApp;
  let server: http.Server;
  /** Every attempt on this app, so the limiter's count is known exactly. */
  let attempts = 0;
  const attempt = (email: string, password: string) => {
    attempts++;
    return request(server).post('/api/auth/sign-in').send({ email, password });
  };

  beforeAll(async () => {
    s = await createTestApp({ secureCookies: true });
    // express-session only sends a Secure cookie over TLS: mark each socket as a TLS one, as a
    // terminating https listener would.
    server = http.createServer((req, res) => {
      (req.socket as unknown as { encrypted: boolean }).encrypted = true;
      s.app(req, res);
    });
  });
  afterAll(async () => {
    await s?.close();
  });

  it('the setting comes from EMBERLOT_SECURE_COOKIES=1, and the cookie is then Secure, HttpOnly and SameSite=Lax', async () => {
    const { configFromEnv } = await import('../../server/config');
    expect(configFromEnv({ EMBERLOT_SECURE_COOKIES: '1' }).secureCookies).toBe(true);
    expect(configFromEnv({}).secureCookies).toBe(false);
    const c = setCookieOf(await attempt(emailFor('admin'), TEST_PASSWORD));
    expect(c).toMatch(/;\s*Secure/i);
    expect(c).toMatch(/;\s*HttpOnly/i);
    expect(c).toMatch(/;\s*SameSite=Lax/i);
  }, 30_000);

  it(`locks an account after ${LOCKOUT_AFTER} wrong passwords: even the right one is then refused, and the lock is audited`, async () => {
    for (let k = 1; k <= LOCKOUT_AFTER; k++) {
      const res = await attempt(emailFor('operator'), `wrong-password-${k}`);
      expect(res.status).toBe(401);
      expect(apiErrorSchema.safeParse(res.body).success).toBe(true);
    }
    const locked = await attempt(emailFor('operator'), TEST_PASSWORD);
    expect(locked.status).toBe(401);
    expect(locked.body.error.message).toBe(SIGN_IN_REFUSED);
    expect(sidOf(locked)).toBeNull();
    const audits = await s.ctx.ds.getRepository(AuditLogEntity).findBy({ action: 'user.locked' });
    expect(audits).toHaveLength(1);
    // Other accounts are not affected.
    expect((await attempt(emailFor('engineer'), TEST_PASSWORD)).status).toBe(200);
  }, 60_000);

  it(`throttles an address after ${SIGN_IN_MAX_PER_WINDOW} attempts with a 429 in the error shape`, async () => {
    const statuses: number[] = [];
    const spent = attempts;
    for (let k = 0; k < SIGN_IN_MAX_PER_WINDOW - spent + 3; k++) {
      const res = await attempt(`nobody-${k}@test.example`, 'whatever-password');
      statuses.push(res.status);
      if (res.status === 429) {
        expect(apiErrorSchema.parse(res.body).error.code).toBe('too_many_requests');
        expect(res.body.error.message).toMatch(/Too many sign-in attempts/);
        expect(res.headers['ratelimit-policy']).toBeDefined();
      } else expect(res.status).toBe(401);
    }
    expect(statuses.indexOf(429)).toBe(SIGN_IN_MAX_PER_WINDOW - spent);
    expect(statuses.slice(statuses.indexOf(429)).every((x) => x === 429)).toBe(true);
    // Even the right password is throttled now, and no session is handed out.
    const right = await attempt(emailFor('admin'), TEST_PASSWORD);
    expect(right.status).toBe(429);
    expect(sidOf(right)).toBeNull();
  }, 90_000);
});
