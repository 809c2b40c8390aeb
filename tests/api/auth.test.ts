import request from 'supertest';
import { UserEntity } from '../../server/db/entities';
import { LOCKOUT_AFTER, SIGN_IN_REFUSED } from '../../server/modules/auth/auth.service';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t.close();
});

describe('sign-in', () => {
  it('signs in with the right password, sets an http-only SameSite cookie and returns the user', async () => {
    const res = await request(t.app)
      .post('/api/auth/sign-in')
      .send({ email: emailFor('engineer'), password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ email: 'engineer@test.example', role: 'engineer' });
    expect(res.body.user.passwordHash).toBeUndefined();
    const cookie = String(res.headers['set-cookie']);
    expect(cookie).toMatch(/emberlot\.sid=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
  });

  it('accepts the e-mail in any case', async () => {
    const res = await request(t.app).post('/api/auth/sign-in').send({ email: 'Manager@Test.Example', password: TEST_PASSWORD });
    expect(res.status).toBe(200);
  });

  it('gives one answer for a wrong password and for an unknown user alike', async () => {
    const wrong = await request(t.app)
      .post('/api/auth/sign-in')
      .send({ email: emailFor('operator'), password: 'not-it-at-all' });
    const unknown = await request(t.app).post('/api/auth/sign-in').send({ email: 'nobody@test.example', password: 'whatever-123' });
    for (const res of [wrong, unknown]) {
      expect(res.status).toBe(401);
      expect(res.body).toEqual({ error: { code: 'unauthenticated', message: SIGN_IN_REFUSED } });
    }
    await t.ctx.ds.getRepository(UserEntity).update({ email: emailFor('operator') }, { failedSignIns: 0 });
  });

  it('rejects a malformed body with 400 and field messages', async () => {
    const res = await request(t.app).post('/api/auth/sign-in').send({ email: 'not-an-email', password: '' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('bad_request');
    expect(res.body.error.fields.email).toEqual(['Enter an e-mail address']);
    expect(res.body.error.fields.password).toEqual(['Enter your password']);
  });

  it('rejects invalid JSON with 400 in the error shape, never a stack trace', async () => {
    const res = await request(t.app).post('/api/auth/sign-in').set('Content-Type', 'application/json').send('{"email": "x@y.z", ');
    expect(res.status).toBe(400);
    expect(res.body).toEqual({ error: { code: 'bad_request', message: 'The request body is not valid JSON.' } });
  });

  it(`locks an account after ${LOCKOUT_AFTER} wrong passwords, even for the right password afterwards`, async () => {
    const email = 'lockme@test.example';
    const u = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('manager') });
    await t.ctx.ds.getRepository(UserEntity).insert({ email, name: 'Lock Me', role: 'manager', passwordHash: u.passwordHash });
    for (let i = 1; i < LOCKOUT_AFTER; i++) {
      const r = await request(t.app).post('/api/auth/sign-in').send({ email, password: 'wrong-password' });
      expect(r.body.error.message).toBe(SIGN_IN_REFUSED);
    }
    // The lock itself is not announced (that told outsiders the account exists; tests/api/security-http.test.ts).
    const last = await request(t.app).post('/api/auth/sign-in').send({ email, password: 'wrong-password' });
    expect(last.body.error.message).toBe(SIGN_IN_REFUSED);
    const right = await request(t.app).post('/api/auth/sign-in').send({ email, password: TEST_PASSWORD });
    expect(right.status).toBe(401);
    expect(right.body.error.message).toBe(SIGN_IN_REFUSED);
    const row = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email });
    expect(row.lockedUntil!.getTime()).toBeGreaterThan(Date.now() + 14 * 60_000);
  });

  it('refuses a deactivated user with a clear message', async () => {
    const email = 'gone@test.example';
    const u = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('manager') });
    await t.ctx.ds.getRepository(UserEntity).insert({ email, name: 'Gone', role: 'manager', passwordHash: u.passwordHash, active: false });
    const res = await request(t.app).post('/api/auth/sign-in').send({ email, password: TEST_PASSWORD });
    expect(res.status).toBe(401);
    expect(res.body.error.message).toBe('This account is deactivated. Ask an administrator.');
  });
});

describe('session', () => {
  it('me → sign-out → me: 200 then 401 with "session has ended"', async () => {
    const agent = request.agent(t.app);
    await agent
      .post('/api/auth/sign-in')
      .send({ email: emailFor('admin'), password: TEST_PASSWORD })
      .expect(200);
    const me = await agent.get('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body.user.role).toBe('admin');
    await agent.post('/api/auth/sign-out').expect(204);
    const after = await agent.get('/api/auth/me');
    expect(after.status).toBe(401);
  });

  it('gives a new session id at sign-in (no session fixation)', async () => {
    const agent = request.agent(t.app);
    const first = await agent.post('/api/auth/sign-in').send({ email: emailFor('admin'), password: TEST_PASSWORD });
    const sid1 = String(first.headers['set-cookie']).match(/emberlot\.sid=([^;]+)/)![1];
    const second = await agent.post('/api/auth/sign-in').send({ email: emailFor('admin'), password: TEST_PASSWORD });
    const sid2 = String(second.headers['set-cookie']).match(/emberlot\.sid=([^;]+)/)![1];
    expect(sid2).not.toBe(sid1);
  });

  it('an expired session answers 401 "Your session has ended. Sign in again."', async () => {
    const agent = request.agent(t.app);
    await agent
      .post('/api/auth/sign-in')
      .send({ email: emailFor('engineer'), password: TEST_PASSWORD })
      .expect(200);
    await t.ctx.ds.query(`UPDATE "session" SET expire = now() - interval '1 minute'`);
    const res = await agent.get('/api/auth/me');
    expect(res.status).toBe(401);
    expect(res.body).toEqual({ error: { code: 'unauthenticated', message: 'Your session has ended. Sign in again.' } });
  });

  it('signed out without any cookie: "Sign in first."', async () => {
    const res = await request(t.app).get('/api/auth/me');
    expect(res.status).toBe(401);
    expect(res.body.error.message).toBe('Sign in first.');
  });

  it('sends security headers and no x-powered-by', async () => {
    const res = await request(t.app).get('/api/health');
    expect(res.status).toBe(200);
    // One process, no election: it runs the workers itself (server/cluster/workers.ts).
    expect(res.body.workers).toEqual({ mode: 'single', role: 'leader' });
    expect(res.headers['x-powered-by']).toBeUndefined();
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toMatch(/default-src 'self'/);
  });

  it('unknown API routes answer 404 in the error shape', async () => {
    const res = await request(t.app).get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body.error).toEqual({ code: 'not_found', message: 'The API route GET /api/no-such-thing was not found.' });
  });
});
