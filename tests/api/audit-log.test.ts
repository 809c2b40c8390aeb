/**
 * The audit log view and its hash chain (issue #21 item 5): admins and managers filter by person,
 * object and time and export CSV; each entry carries the hash of the one before; concurrent writers
 * do not fork the chain; `npm run audit:verify` passes on a clean log and fails on a row edited,
 * deleted or inserted directly in the database.
 */
import { execFile } from 'node:child_process';
import * as path from 'node:path';
import { promisify } from 'node:util';
import { AuditLogEntity } from '../../server/db/entities';
import { createTestApp, type TestApp } from '../support/api';

const run = promisify(execFile);
let t: TestApp;
const ROOT = path.resolve(__dirname, '../..');

/** `npm run audit:verify` against the test's own database (the script, as a lab would run it). */
async function auditVerify(): Promise<{
  code: number;
  last: { ok: boolean; checked: number; firstBreak: { id: string; problem: string } | null };
}> {
  const env = {
    ...process.env,
    EMBERLOT_DB_HOST: t.db.config.host,
    EMBERLOT_DB_PORT: String(t.db.config.port),
    EMBERLOT_DB_NAME: t.db.config.database,
    EMBERLOT_DB_USER: t.db.config.user,
    EMBERLOT_DB_PASSWORD: t.db.config.password,
  };
  let stdout: string;
  let code = 0;
  try {
    ({ stdout } = await run('npm', ['run', '--silent', 'audit:verify'], { cwd: ROOT, env }));
  } catch (e) {
    const err = e as { code: number; stdout: string };
    code = err.code;
    stdout = err.stdout;
  }
  const lines = stdout.trim().split('\n');
  return { code, last: JSON.parse(lines[lines.length - 1]) };
}

beforeAll(async () => {
  t = await createTestApp();
  const admin = await t.signIn('admin');
  // A few entries by different people at known times.
  for (const [email, role] of [
    ['aster@harrowgate.example', 'engineer'],
    ['brook@harrowgate.example', 'operator'],
  ] as const) {
    const r = await admin.post('/api/users').send({ email, name: email.split('@')[0], role, password: 'long-enough-pw' });
    expect(r.status).toBe(201);
  }
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send({
    partNumber: 'HPD-AUD1',
    kind: 'bjt',
    polarity: 'NPN',
    bvcboV: 140,
    bvceoV: 80,
    bveboV: 6,
    icMaxA: 1.5,
    pMaxW: 12.5,
    pRatedAtC: 25,
    tjMaxC: 150,
    thetaJcCPerW: 10,
    thetaJaCPerW: 83.3,
    betaRef: 120,
    betaRefIcA: 0.15,
    betaRefTC: 25,
    xtb: 1.6,
  });
  expect(type.status).toBe(201);
});
afterAll(async () => {
  await t.close();
});

describe('the audit log view', () => {
  it('admins and managers read it; engineers and operators do not', async () => {
    for (const role of ['admin', 'manager'] as const) expect((await (await t.signIn(role)).get('/api/audit')).status).toBe(200);
    for (const role of ['engineer', 'operator'] as const) expect((await (await t.signIn(role)).get('/api/audit')).status).toBe(403);
  });

  it('filters by person, object and time', async () => {
    const mgr = await t.signIn('manager');
    const byAdmin = await mgr.get('/api/audit').query({ actor: 'admin@test', entity: 'user', action: 'user.create' });
    expect(byAdmin.body.items.map((e: { action: string; details: { email: string } }) => [e.action, e.details.email])).toEqual([
      ['user.create', 'brook@harrowgate.example'],
      ['user.create', 'aster@harrowgate.example'],
    ]);
    // By name as well as e-mail ("Test engineer" created the device type).
    const byName = await mgr.get('/api/audit').query({ actor: 'Test engin', entity: 'device-type' });
    expect(byName.body.items.map((e: { action: string }) => e.action)).toEqual(['device-type.create']);
    // Every entry of one person, whatever the object.
    const sign = await mgr.get('/api/audit').query({ actor: 'engineer@test.example' });
    expect(sign.body.items.map((e: { action: string }) => e.action).sort()).toEqual(['device-type.create', 'user.sign-in']);
    const all = await mgr.get('/api/audit');
    const last = all.body.items[0];
    const future = await mgr.get('/api/audit').query({ from: new Date(Date.parse(last.at) + 1).toISOString() });
    expect(future.body.items).toEqual([]);
    const window = await mgr.get('/api/audit').query({ from: last.at, to: last.at });
    expect(window.body.items.map((e: { id: string }) => e.id)).toEqual([last.id]);
    const limited = await mgr.get('/api/audit').query({ limit: 1 });
    expect([limited.body.items.length, limited.body.more]).toEqual([1, true]);
    const bad = await mgr.get('/api/audit').query({ from: 'yesterday' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.from).toEqual(['From: give an ISO date and time']);
  });

  it('exports the filtered entries as CSV, each with its hash', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get('/api/audit/export.csv').query({ entity: 'user', action: 'user.create' });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('text/csv; charset=utf-8');
    const lines = res.text.trim().split('\r\n');
    expect(lines[0]).toBe('id,at,actor,action,object,object id,reason,details,hash');
    expect(lines).toHaveLength(3);
    expect(lines[1]).toContain(',admin@test.example,user.create,user,');
    expect(lines[1]).toMatch(/,[0-9a-f]{64}$/);
  });
});

describe('the hash chain', () => {
  it('concurrent writers never fork the chain: each entry links to the one before', async () => {
    const writes = Array.from({ length: 40 }, (_, i) =>
      t.ctx.audit.record({ actor: 'system', action: 'test.concurrent', entity: 'test', entityId: String(i), details: { i } }),
    );
    await Promise.all(writes);
    const rows = await t.ctx.ds.getRepository(AuditLogEntity).find({ order: { id: 'ASC' } });
    for (let i = 1; i < rows.length; i++) expect(rows[i].prevHash).toBe(rows[i - 1].hash);
    expect(new Set(rows.map((r) => r.prevHash)).size).toBe(rows.length);
    expect((await t.ctx.audit.verify()).ok).toBe(true);
  });

  it('npm run audit:verify passes on the clean log and finds a row edited directly in the database', async () => {
    const clean = await auditVerify();
    expect(clean.code).toBe(0);
    const count = await t.ctx.ds.getRepository(AuditLogEntity).count();
    expect(clean.last).toEqual({ ok: true, checked: count, firstBreak: null });
    // "Un-fail" a record the way an insider would: straight in SQL, bypassing the application.
    const target = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({
      action: 'user.create',
      entityId: (await t.ctx.ds.query(`SELECT id FROM users WHERE email = 'brook@harrowgate.example'`))[0].id,
    });
    await t.ctx.ds.query(`UPDATE audit_log SET details = jsonb_set(details, '{role}', '"admin"') WHERE id = $1`, [target.id]);
    const tampered = await auditVerify();
    expect(tampered.code).toBe(1);
    expect(tampered.last.ok).toBe(false);
    expect(tampered.last.firstBreak!.id).toBe(String(target.id));
    expect(tampered.last.firstBreak!.problem).toMatch(/was changed after it was written/);
    // The API's check (admins, managers) says the same.
    const mgr = await t.signIn('manager');
    expect((await mgr.get('/api/audit/verify')).body.firstBreak.id).toBe(String(target.id));
  });

  it('a deleted row and a row inserted by hand are found too', async () => {
    // Start again from a clean chain of five entries.
    await t.ctx.ds.query(`DELETE FROM audit_log`);
    for (let i = 0; i < 5; i++) await t.ctx.audit.record({ actor: 'system', action: 'test.clean', entity: 'test', entityId: String(i) });
    expect((await t.ctx.audit.verify()).ok).toBe(true);
    const clean = await t.ctx.ds.getRepository(AuditLogEntity).find({ order: { id: 'ASC' } });
    await t.ctx.ds.query(`DELETE FROM audit_log WHERE id = $1`, [clean[2].id]);
    const del = await t.ctx.audit.verify();
    expect(del.firstBreak).toEqual({
      id: String(clean[3].id),
      problem: expect.stringMatching(/^entry \d+ links to [0-9a-f]{64}, but the entry before it hashes to [0-9a-f]{64}$/),
    });
    // An entry inserted by hand has no valid link or hash.
    await t.ctx.ds.query(`DELETE FROM audit_log`);
    await t.ctx.audit.record({ actor: 'system', action: 'test.clean', entity: 'test' });
    await t.ctx.ds.query(`INSERT INTO audit_log (actor, action, entity) VALUES ('system', 'forged', 'test')`);
    const forged = await t.ctx.audit.verify();
    expect(forged.ok).toBe(false);
    expect(forged.firstBreak!.problem).toMatch(/links to nothing/);
  });
});
