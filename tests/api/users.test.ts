import request from 'supertest';
import { AuditLogEntity, UserEntity } from '../../server/db/entities';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t.close();
});

describe('people (admin)', () => {
  it('adds a user, who can then sign in with the given role; the change is audited', async () => {
    const admin = await t.signIn('admin');
    const res = await admin
      .post('/api/users')
      .send({ email: 'New.Person@Test.Example', name: 'New Person', role: 'operator', password: 'a-long-password' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ email: 'new.person@test.example', role: 'operator', active: true });
    const signIn = await request(t.app).post('/api/auth/sign-in').send({ email: 'new.person@test.example', password: 'a-long-password' });
    expect(signIn.status).toBe(200);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'user.create', entityId: res.body.id });
    expect(audit.actor).toBe(emailFor('admin'));
  });

  it('refuses a duplicate e-mail with 409 and changes nothing', async () => {
    const admin = await t.signIn('admin');
    const before = await tableCounts(t.ctx.ds);
    const res = await admin
      .post('/api/users')
      .send({ email: emailFor('manager'), name: 'Dup', role: 'manager', password: 'a-long-password' });
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({ code: 'conflict', message: 'A user with the e-mail manager@test.example already exists.' });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses an invalid body with 400, field by field, and changes nothing', async () => {
    const admin = await t.signIn('admin');
    const before = await tableCounts(t.ctx.ds);
    const res = await admin.post('/api/users').send({ email: 'x', name: '', role: 'wizard', password: 'short' });
    expect(res.status).toBe(400);
    expect(Object.keys(res.body.error.fields).sort()).toEqual(['email', 'name', 'password', 'role']);
    expect(res.body.error.fields.password).toEqual(['Use at least 10 characters']);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('changes a role and deactivates; the deactivated user cannot sign in and loses open sessions', async () => {
    const admin = await t.signIn('admin');
    const created = await admin
      .post('/api/users')
      .send({ email: 'temp@test.example', name: 'Temp', role: 'manager', password: 'a-long-password' });
    const theirAgent = request.agent(t.app);
    await theirAgent.post('/api/auth/sign-in').send({ email: 'temp@test.example', password: 'a-long-password' }).expect(200);
    const role = await admin.patch(`/api/users/${created.body.id}`).send({ role: 'engineer' });
    expect(role.status).toBe(200);
    expect(role.body.role).toBe('engineer');
    const off = await admin.patch(`/api/users/${created.body.id}`).send({ active: false });
    expect(off.body.active).toBe(false);
    expect((await theirAgent.get('/api/auth/me')).status).toBe(401);
    const again = await request(t.app).post('/api/auth/sign-in').send({ email: 'temp@test.example', password: 'a-long-password' });
    expect(again.body.error.message).toBe('This account is deactivated. Ask an administrator.');
  });

  it('an admin cannot deactivate themself', async () => {
    const admin = await t.signIn('admin');
    const me = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('admin') });
    const res = await admin.patch(`/api/users/${me.id}`).send({ active: false });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe('You cannot deactivate yourself or remove your own administrator role.');
  });

  it('anyone may change their own notification settings, but not their role', async () => {
    const op = await t.signIn('operator');
    const me = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('operator') });
    const ok = await op.patch(`/api/users/${me.id}`).send({ notifyAlarms: false });
    expect(ok.status).toBe(200);
    expect(ok.body.notifyAlarms).toBe(false);
    const role = await op.patch(`/api/users/${me.id}`).send({ role: 'admin' });
    expect(role.status).toBe(403);
    const other = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('manager') });
    const theirs = await op.patch(`/api/users/${other.id}`).send({ notifyAlarms: false });
    expect(theirs.status).toBe(403);
  });

  it('a bad id in the address is a 400, an unknown one a 404', async () => {
    const admin = await t.signIn('admin');
    expect((await admin.patch('/api/users/not-a-uuid').send({ name: 'X' })).status).toBe(400);
    const res = await admin.patch('/api/users/00000000-0000-4000-8000-000000000000').send({ name: 'X' });
    expect(res.status).toBe(404);
    expect(res.body.error.message).toBe('The user was not found.');
  });

  it('never returns password hashes', async () => {
    const admin = await t.signIn('admin');
    const res = await admin.get('/api/users');
    expect(res.status).toBe(200);
    expect(res.body.items.length).toBeGreaterThanOrEqual(4);
    expect(JSON.stringify(res.body)).not.toMatch(/password|\$2[aby]\$/i);
    void TEST_PASSWORD;
  });
});
