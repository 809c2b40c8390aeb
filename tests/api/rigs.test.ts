import bcrypt from 'bcryptjs';
import request from 'supertest';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { AuditLogEntity, RigEntity } from '../../server/db/entities';
import { type RigLink } from '../../server/modules/telemetry/contracts';
import { pgPoolOf } from '../../server/modules/telemetry/telemetry.feature';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
const revoked: string[] = [];

beforeAll(async () => {
  t = await createTestApp();
  const fake: RigLink = {
    send: async () => {
      throw new Error('not used');
    },
    connected: () => true,
    revoke: async (code) => {
      revoked.push(code);
      return true;
    },
  };
  t.ctx.services.rigLink = fake;
});
afterAll(async () => {
  await t.close();
});

const OVEN = { code: 'ov-11', name: 'Oven 11 · powered-life board', location: 'Bay D', socketCount: 32, maxTempC: 175, maxVoltageV: 100 };
const auth = () => createPgAuthenticate({ pool: pgPoolOf(t.ctx), server: null, verifiedCacheSize: 0 });

describe('registering a rig issues MQTT credentials once', () => {
  let secret = '';

  it('admin registers; the secret is in this response only and stored as a bcrypt hash', async () => {
    const admin = await t.signIn('admin');
    const res = await admin.post('/api/rigs').send(OVEN);
    expect(res.status).toBe(201);
    expect(res.body.rig).toMatchObject({
      code: 'OV-11',
      socketCount: 32,
      mqttUsername: 'rig-ov-11',
      credentialsRevokedAt: null,
      online: false,
    });
    expect(res.body.credentials.username).toBe('rig-ov-11');
    secret = res.body.credentials.secret;
    expect(secret).toMatch(/^[A-Za-z0-9_-]{32}$/);
    expect(JSON.stringify(res.body.rig)).not.toContain(secret);
    expect(res.body.rig).not.toHaveProperty('mqttSecretHash');

    const row = await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: 'OV-11' });
    expect(row.mqttSecretHash).toMatch(/^\$2[aby]\$10\$/);
    expect(row.mqttSecretHash).not.toContain(secret);
    expect(await bcrypt.compare(secret, row.mqttSecretHash)).toBe(true);
    // The broker's authenticator accepts exactly these credentials.
    expect(await auth()('rig-ov-11', secret)).toEqual({ kind: 'rig', rigCode: 'OV-11' });
    expect(await auth()('rig-ov-11', 'wrong')).toBeNull();

    // Reading the rig later never shows the secret again.
    const get = await (await t.signIn('operator')).get('/api/rigs/OV-11');
    expect(get.status).toBe(200);
    expect(JSON.stringify(get.body)).not.toContain(secret);
    expect(get.body).not.toHaveProperty('credentials');
    const list = await (await t.signIn('manager')).get('/api/rigs');
    expect(list.body.items.map((r: { code: string }) => r.code)).toContain('OV-11');

    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'rig.create', entityId: row.id });
    expect(JSON.stringify(audit.details)).not.toContain(secret);
  });

  it('refuses a duplicate code, a bad code and rule breaks, changing nothing', async () => {
    const admin = await t.signIn('admin');
    const before = await tableCounts(t.ctx.ds);
    const dup = await admin.post('/api/rigs').send(OVEN);
    expect(dup.status).toBe(409);
    expect(dup.body.error.message).toMatch(/OV-11 is already registered/);
    const bad = await admin.post('/api/rigs').send({ ...OVEN, code: 'oven 12!' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.code).toBeDefined();
    const hum = await admin.post('/api/rigs').send({ ...OVEN, code: 'HC-12', humidityCapable: true });
    expect(hum.status).toBe(400);
    expect(hum.body.error.fields.maxHumidityPct[0]).toMatch(/humidity/);
    const sockets = await admin.post('/api/rigs').send({ ...OVEN, code: 'OV-12', socketCount: 0 });
    expect(sockets.status).toBe(400);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('only an admin writes', async () => {
    const eng = await t.signIn('engineer');
    expect((await eng.post('/api/rigs').send({ ...OVEN, code: 'OV-13' })).status).toBe(403);
    expect((await eng.post('/api/rigs/OV-11/credentials').send({})).status).toBe(403);
    expect((await request(t.app).get('/api/rigs')).status).toBe(401);
  });

  it('rotation issues a new secret; the old one stops working and the open session is kicked', async () => {
    const admin = await t.signIn('admin');
    const res = await admin.post('/api/rigs/OV-11/credentials').send({});
    expect(res.status).toBe(200);
    const next = res.body.credentials.secret as string;
    expect(next).not.toBe(secret);
    expect(await auth()('rig-ov-11', secret)).toBeNull();
    expect(await auth()('rig-ov-11', next)).toEqual({ kind: 'rig', rigCode: 'OV-11' });
    expect(revoked).toContain('OV-11');
    secret = next;
  });

  it('revocation refuses the next connect, asks the broker to kick the rig, and is audited', async () => {
    const admin = await t.signIn('admin');
    revoked.length = 0;
    const noReason = await admin.post('/api/rigs/OV-11/revoke').send({});
    expect(noReason.status).toBe(400);
    const res = await admin.post('/api/rigs/OV-11/revoke').send({ reason: 'Controller board replaced' });
    expect(res.status).toBe(200);
    expect(res.body.credentialsRevokedAt).not.toBeNull();
    expect(res.body.disconnectRequested).toBe(true);
    expect(revoked).toEqual(['OV-11']);
    expect(await auth()('rig-ov-11', secret)).toBeNull();
    const again = await admin.post('/api/rigs/OV-11/revoke').send({ reason: 'twice' });
    expect(again.status).toBe(409);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'rig.credentials.revoke' });
    expect(audit.reason).toBe('Controller board replaced');
    // A rotation lifts the revocation with a fresh secret.
    const rot = await admin.post('/api/rigs/OV-11/credentials').send({});
    expect(rot.body.rig.credentialsRevokedAt).toBeNull();
    expect(await auth()('rig-ov-11', rot.body.credentials.secret)).toEqual({ kind: 'rig', rigCode: 'OV-11' });
  });

  it('unknown rigs answer 404', async () => {
    const admin = await t.signIn('admin');
    expect((await admin.get('/api/rigs/OV-404')).status).toBe(404);
    expect((await admin.post('/api/rigs/OV-404/revoke').send({ reason: 'gone away' })).status).toBe(404);
  });
});

describe('maintenance windows', () => {
  const inDays = (d: number) => new Date(Date.now() + d * 86_400_000).toISOString();

  it('creates, lists and deletes a window (audited); readers can list', async () => {
    const admin = await t.signIn('admin');
    const res = await admin
      .post('/api/rigs/OV-11/maintenance')
      .send({ startsAt: inDays(2), endsAt: inDays(3), reason: 'Thermocouple calibration' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ rigCode: 'OV-11', reason: 'Thermocouple calibration' });
    const list = await (await t.signIn('engineer')).get('/api/rigs/OV-11/maintenance');
    expect(list.body.items).toHaveLength(1);
    const del = await admin.delete(`/api/rigs/OV-11/maintenance/${res.body.id}`);
    expect(del.status).toBe(204);
    expect((await admin.get('/api/rigs/OV-11/maintenance')).body.items).toHaveLength(0);
    expect((await admin.delete(`/api/rigs/OV-11/maintenance/${res.body.id}`)).status).toBe(404);
    const actions = (await t.ctx.ds.getRepository(AuditLogEntity).find()).map((a) => a.action);
    expect(actions).toEqual(expect.arrayContaining(['rig.maintenance.create', 'rig.maintenance.delete']));
  });

  it('validates: end after start, not in the past, not overlapping, at most 31 days, admin only', async () => {
    const admin = await t.signIn('admin');
    const ok = await admin.post('/api/rigs/OV-11/maintenance').send({ startsAt: inDays(5), endsAt: inDays(6), reason: 'Door seal' });
    expect(ok.status).toBe(201);
    const before = await tableCounts(t.ctx.ds);
    const reversed = await admin.post('/api/rigs/OV-11/maintenance').send({ startsAt: inDays(9), endsAt: inDays(8), reason: 'Fan' });
    expect(reversed.status).toBe(400);
    expect(reversed.body.error.fields.endsAt[0]).toMatch(/end after it starts/);
    const past = await admin.post('/api/rigs/OV-11/maintenance').send({ startsAt: inDays(-3), endsAt: inDays(-2), reason: 'Fan' });
    expect(past.status).toBe(422);
    const overlap = await admin.post('/api/rigs/OV-11/maintenance').send({ startsAt: inDays(5.5), endsAt: inDays(7), reason: 'Fan' });
    expect(overlap.status).toBe(409);
    expect(overlap.body.error.message).toMatch(/may not overlap/);
    const long = await admin.post('/api/rigs/OV-11/maintenance').send({ startsAt: inDays(40), endsAt: inDays(80), reason: 'Rebuild' });
    expect(long.status).toBe(400);
    const noDate = await admin.post('/api/rigs/OV-11/maintenance').send({ startsAt: 'tomorrow', endsAt: inDays(2), reason: 'Fan' });
    expect(noDate.status).toBe(400);
    const eng = await (
      await t.signIn('engineer')
    )
      .post('/api/rigs/OV-11/maintenance')
      .send({ startsAt: inDays(20), endsAt: inDays(21), reason: 'Fan' });
    expect(eng.status).toBe(403);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });
});

describe('telemetry admin views', () => {
  it('rejections and counters: admin and engineer only', async () => {
    await t.ctx.ds.query(
      `INSERT INTO rejected_messages (topic, rig_code, reason, excerpt) VALUES ('emberlot/v1/rigs/OV-11/telemetry', 'OV-11', 'telemetry: payload is not valid JSON', '{"v":1,')`,
    );
    await t.ctx.ds.query(`INSERT INTO system_counters (name, value) VALUES ('ingest_rejected', 1)`);
    const admin = await t.signIn('admin');
    const rej = await admin.get('/api/telemetry/rejections?rig=OV-11');
    expect(rej.status).toBe(200);
    expect(rej.body.items[0]).toMatchObject({ rigCode: 'OV-11', reason: 'telemetry: payload is not valid JSON' });
    const stats = await (await t.signIn('engineer')).get('/api/telemetry/stats');
    expect(stats.status).toBe(200);
    expect(stats.body.counters).toMatchObject({ ingest_rejected: 1, ingest_dropped: 0 });
    expect((await (await t.signIn('operator')).get('/api/telemetry/stats')).status).toBe(403);
  });
});
