/**
 * Sign-off of a lot verdict (issue #21 item 4) as an electronic signature after 21 CFR Part 11
 * §11.50 (printed name, date and time, meaning) and §11.200 (password re-entered at signing): the
 * signature holds the SHA-256 of the canonical JSON of the lot's judged evidence and verdict, and a
 * change to that data shows the signature as needing a new one. Bad input changes nothing.
 */
import { createHash } from 'node:crypto';
import { DeviceEntity, LotEntity, MeasurementEntity, RigEntity, VerdictSignatureEntity } from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { canonicalJson } from '../../shared/canonical-json';
import { createTestApp, TEST_PASSWORD, type TestApp } from '../support/api';
import { insertTestDeviceType, insertTestHtrbPlan, tableCounts } from '../support/db';

let t: TestApp;
const ids: Record<string, string> = {};

beforeAll(async () => {
  t = await createTestApp();
  await t.ctx.ds.transaction(async (m) => {
    const rig = await m.save(
      m.create(RigEntity, {
        code: 'OV-96',
        name: 'test oven',
        socketCount: 64,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-96',
        mqttSecretHash: 'x',
        credentialsIssuedAt: new Date(),
      }),
    );
    const type = await insertTestDeviceType(m, 'HPD-S100');
    const plan = await insertTestHtrbPlan(m, type.id, { name: 'HTRB sign-off plan', sampleSize: 20 });
    const mk = async (code: string, state: 'finished' | 'stressing') => {
      const lot = await m.save(m.create(LotEntity, { code, deviceTypeId: type.id, quantity: 1000, notes: '' }));
      const devices = await m.save(
        Array.from({ length: 20 }, (_, i) =>
          m.create(DeviceEntity, { lotId: lot.id, serial: `${code.slice(-1)}${String(i + 1).padStart(4, '0')}` }),
        ),
      );
      await insertHistoryRun(m, {
        code: `R-${code}`,
        plan,
        deviceType: type,
        rig,
        lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: -2, leakageGrowthPer1000h: 1.2 } }],
        state,
        startedAt: new Date('2026-03-01T00:00:00Z'),
        stressHours: state === 'finished' ? 1000 : 560,
        measuredH: state === 'finished' ? [0, 168, 500, 1000] : [0, 168, 500],
        noise: 0,
      });
      ids[code] = lot.id;
    };
    await mk('HG9901-A', 'finished');
    await mk('HG9901-P', 'stressing');
  });
});
afterAll(async () => {
  await t.close();
});

describe('signing a lot verdict', () => {
  it('refuses a wrong password, a missing meaning and an in-progress verdict with clear errors; nothing changes', async () => {
    const mgr = await t.signIn('manager');
    const before = await tableCounts(t.ctx.ds);
    const wrong = await mgr.post(`/api/signoff/lots/${ids['HG9901-A']}`).send({ password: 'not-my-password', meaning: 'approved' });
    expect(wrong.status).toBe(403);
    expect(wrong.body.error.message).toBe(
      'Wrong password: nothing was signed. After 5 wrong passwords in a row the account is locked for 15 minutes.',
    );
    const noMeaning = await mgr.post(`/api/signoff/lots/${ids['HG9901-A']}`).send({ password: TEST_PASSWORD });
    expect(noMeaning.status).toBe(400);
    expect(noMeaning.body.error.fields.meaning).toEqual(['State what your signature means: reviewed or approved']);
    const noPassword = await mgr.post(`/api/signoff/lots/${ids['HG9901-A']}`).send({ meaning: 'approved' });
    expect(noPassword.status).toBe(400);
    expect(noPassword.body.error.fields.password).toEqual(['Enter your password to sign']);
    const running = await mgr.post(`/api/signoff/lots/${ids['HG9901-P']}`).send({ password: TEST_PASSWORD, meaning: 'reviewed' });
    expect(running.status).toBe(422);
    expect(running.body.error.message).toBe('Lot HG9901-P is in progress: a verdict can be signed once the stress is over.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    // An operator may not sign at all.
    const op = await t.signIn('operator');
    expect((await op.post(`/api/signoff/lots/${ids['HG9901-A']}`).send({ password: TEST_PASSWORD, meaning: 'approved' })).status).toBe(403);
  });

  it('records who, when, meaning and the SHA-256 of the canonical JSON of the judged evidence; audited', async () => {
    const mgr = await t.signIn('manager');
    const lotId = ids['HG9901-A'];
    const res = await mgr.post(`/api/signoff/lots/${lotId}`).send({ password: TEST_PASSWORD, meaning: 'approved' });
    expect(res.status).toBe(201);
    expect(res.body.verdict).toBe('passed');
    expect(res.body.signatures).toHaveLength(1);
    const s = res.body.signatures[0];
    expect(s).toMatchObject({
      verdict: 'passed',
      meaning: 'approved',
      signer: { name: 'Test manager', email: 'manager@test.example' },
      stale: false,
    });
    expect(Math.abs(Date.parse(s.signedAt) - Date.now())).toBeLessThan(60_000);
    // The hash is SHA-256 (FIPS 180-4, via node:crypto) of exactly the stored canonical JSON, which
    // is the evidence the analytics service judged, read independently here.
    const row = await t.ctx.ds.getRepository(VerdictSignatureEntity).findOneByOrFail({ id: s.id });
    expect(createHash('sha256').update(row.data, 'utf8').digest('hex')).toBe(s.dataHash);
    const judged = await t.ctx.services.analytics.judgedEvidence(lotId);
    expect(row.data).toBe(canonicalJson({ lotId, lotCode: 'HG9901-A', verdict: 'passed', evidence: judged.evidence }));
    expect(res.body.currentHash).toBe(s.dataHash);
    const audit = await t.ctx.ds.query(`SELECT actor, details FROM audit_log WHERE action = 'verdict.sign' AND entity_id = $1`, [lotId]);
    expect(audit).toEqual([
      { actor: 'manager@test.example', details: expect.objectContaining({ meaning: 'approved', dataHash: s.dataHash, verdict: 'passed' }) },
    ]);
    // Reading it again (nothing changed) gives the same hash: the canonical form is stable.
    const again = await mgr.get(`/api/signoff/lots/${lotId}`);
    expect(again.body.signatures[0].stale).toBe(false);
  });

  it('flags the signature when data under the verdict changes, even when the verdict stays the same', async () => {
    const mgr = await t.signIn('manager');
    const lotId = ids['HG9901-A'];
    // A reading under the verdict changes (one device's 1000 h hFE 0.1 % lower: still within ±15 %).
    const [m] = await t.ctx.ds.query(
      `SELECT m.id, m.hfe FROM measurements m JOIN devices d ON d.id = m.device_id WHERE d.serial = 'A0003' AND m.read_point_h = 1000`,
    );
    await t.ctx.ds.getRepository(MeasurementEntity).update({ id: m.id }, { hfe: m.hfe * 0.999 });
    const res = await mgr.get(`/api/signoff/lots/${lotId}`);
    expect(res.status).toBe(200);
    expect(res.body.verdict).toBe('passed');
    expect(res.body.signatures[0].stale).toBe(true);
    expect(res.body.currentHash).not.toBe(res.body.signatures[0].dataHash);
    // A new signature covers the data as it now stands.
    const eng = await t.signIn('engineer');
    const re = await eng.post(`/api/signoff/lots/${lotId}`).send({ password: TEST_PASSWORD, meaning: 'reviewed' });
    expect(re.status).toBe(201);
    expect(re.body.signatures.map((x: { meaning: string; stale: boolean }) => [x.meaning, x.stale])).toEqual([
      ['reviewed', false],
      ['approved', true],
    ]);
  });
});
