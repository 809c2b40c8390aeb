/**
 * Safety approvals (issue #21 item 3): an override of a blocking plan finding is a request one
 * engineer makes and a second person holding the safety-approval grant decides; nobody decides
 * their own; reverse bias beyond the rated BVCBO or BVEBO is never overridable; every step is
 * audited with the numbers overridden. Bad input gets a clear error and changes nothing.
 */
import { AuditLogEntity, OverrideRequestEntity, UserEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import type { Role } from '../../shared/roles';
import { createTestApp, emailFor, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
const ids: Record<string, string> = {};
const userId = async (role: Role) => (await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor(role) })).id;
const REASON = 'Margin study agreed with the customer; parts are sacrificial.';

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!);
  expect(type.status).toBe(201);
  const plan = (patch: Record<string, unknown>) =>
    eng.post('/api/plans').send({
      name: 'HTRB 145 °C, 80 % VCBO, 1000 h',
      kind: 'htrb',
      deviceTypeId: type.body.id,
      chamberC: 145,
      bias: { vcbV: 112 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 8,
      acceptNumber: 0,
      criteria: {},
      ...patch,
    });
  ids.okPlan = (await plan({})).body.id;
  // Chamber 160 °C against Tj max 150 °C: blocks, and may be overridden with an approval.
  ids.hotPlan = (await plan({ name: 'HTRB 160 °C', chamberC: 160 })).body.id;
  // VCB 130 V: above the derated 112 V (80 % of BVCBO 140 V) but below the rating: blocks, overridable.
  ids.nearPlan = (await plan({ name: 'HTRB 93 % VCBO', bias: { vcbV: 130 } })).body.id;
  // VCB 150 V above the rated BVCBO 140 V, and VEB 7 V above BVEBO 6 V: never overridable.
  ids.avalanchePlan = (await plan({ name: 'HTRB above BVCBO', bias: { vcbV: 150, vebV: 7 } })).body.id;
});
afterAll(async () => {
  await t.close();
});

describe('the never-overridable flag in the plan-rule table', () => {
  it('marks reverse bias above BVCBO and above BVEBO, and not a VCB between the derated allowance and the rating', async () => {
    const eng = await t.signIn('engineer');
    const av = (await eng.get(`/api/plans/${ids.avalanchePlan}`)).body.checkResult.findings;
    const vcb = av.find((f: { code: string }) => f.code === 'vcb-vs-bvcbo');
    const veb = av.find((f: { code: string }) => f.code === 'veb-vs-bvebo');
    // 150 V > BVCBO 140 V; 7 V > BVEBO 6 V (the device's ratings; Emberlot's safety policy).
    expect([vcb.severity, vcb.neverOverride]).toEqual(['block', true]);
    expect([veb.severity, veb.neverOverride]).toEqual(['block', true]);
    const near = (await eng.get(`/api/plans/${ids.nearPlan}`)).body.checkResult.findings;
    const nv = near.find((f: { code: string }) => f.code === 'vcb-vs-bvcbo');
    // 130 V > 0.8 × 140 = 112 V blocks; 130 V < 140 V stays overridable.
    expect(nv.severity).toBe('block');
    expect(nv.neverOverride).toBeUndefined();
  });
});

describe('asking for an override', () => {
  it('refuses a short reason, a plan that blocks nothing and a never-overridable plan; nothing stored', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const short = await eng.post('/api/override-requests').send({ planId: ids.hotPlan, reason: 'because' });
    expect(short.status).toBe(400);
    expect(short.body.error.fields.reason).toEqual(['Write at least 10 characters on why the plan may run anyway']);
    const none = await eng.post('/api/override-requests').send({ planId: ids.okPlan, reason: REASON });
    expect(none.status).toBe(422);
    expect(none.body.error.message).toBe(
      'The plan check of "HTRB 145 °C, 80 % VCBO, 1000 h" (version 1) blocks nothing; book it as it is.',
    );
    const never = await eng.post('/api/override-requests').send({ planId: ids.avalanchePlan, reason: REASON });
    expect(never.status).toBe(422);
    expect(never.body.error.message).toMatch(
      /^"HTRB above BVCBO" \(version 1\) cannot be overridden: Collector-base voltage beyond the derated breakdown; Emitter-base reverse bias beyond BVEBO \(destructive\)\. Reverse bias beyond the rated breakdown drives every part into avalanche; no approval can allow it\./,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('an operator cannot ask; an engineer can, and the request is audited with the numbers', async () => {
    const op = await t.signIn('operator');
    expect((await op.post('/api/override-requests').send({ planId: ids.hotPlan, reason: REASON })).status).toBe(403);
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/override-requests').send({ planId: ids.hotPlan, reason: REASON });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      state: 'pending',
      reason: REASON,
      plan: { name: 'HTRB 160 °C', version: 1, partNumber: 'HPD-2N140' },
    });
    expect(res.body.requestedBy.name).toBe('Test engineer');
    ids.req = res.body.id;
    const a = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'override.request', entityId: ids.hotPlan });
    expect(a.reason).toBe(REASON);
    const chamber = a.details.findings.find((f: { code: string }) => f.code === 'chamber-vs-tjmax');
    expect(chamber.numbers.chamberC.value).toBe(160);
    expect(chamber.numbers.tjMaxC.value).toBe(150);
    // One open request per plan version.
    const twice = await eng.post('/api/override-requests').send({ planId: ids.hotPlan, reason: REASON });
    expect(twice.status).toBe(409);
  });
});

describe('deciding an override', () => {
  it('only an admin grants the safety approval, and not to an operator', async () => {
    const eng = await t.signIn('engineer');
    const mgrId = await userId('manager');
    expect((await eng.patch(`/api/users/${mgrId}`).send({ safetyApprover: true })).status).toBe(403);
    const admin = await t.signIn('admin');
    const op = await admin.patch(`/api/users/${await userId('operator')}`).send({ safetyApprover: true });
    expect(op.status).toBe(422);
    expect(op.body.error.message).toBe(
      'Someone with the operator role cannot decide safety overrides; grant the safety approval to an engineer, manager or administrator.',
    );
  });

  it('refuses someone without the grant, and the requester deciding their own request even with the grant; nothing changes', async () => {
    const mgr = await t.signIn('manager');
    const before = await tableCounts(t.ctx.ds);
    const noGrant = await mgr.post(`/api/override-requests/${ids.req}/decision`).send({ decision: 'approve' });
    expect(noGrant.status).toBe(403);
    expect(noGrant.body.error.message).toBe(
      'Deciding a safety override needs the safety-approval permission; an administrator grants it on People.',
    );
    const admin = await t.signIn('admin');
    expect((await admin.patch(`/api/users/${await userId('engineer')}`).send({ safetyApprover: true })).status).toBe(200);
    const countsAfterGrant = await tableCounts(t.ctx.ds);
    const eng = await t.signIn('engineer');
    const self = await eng.post(`/api/override-requests/${ids.req}/decision`).send({ decision: 'approve' });
    expect(self.status).toBe(403);
    expect(self.body.error.message).toBe('You asked for this override; a second person holding the safety approval must decide it.');
    expect(await tableCounts(t.ctx.ds)).toEqual(countsAfterGrant);
    expect(countsAfterGrant.override_requests).toBe(before.override_requests);
    expect((await t.ctx.ds.getRepository(OverrideRequestEntity).findOneByOrFail({ id: ids.req })).state).toBe('pending');
  });

  it('a refusal needs a note; the granted manager approves; both steps audited; the request is then closed', async () => {
    const admin = await t.signIn('admin');
    const mgrId = await userId('manager');
    const grant = await admin.patch(`/api/users/${mgrId}`).send({ safetyApprover: true });
    expect(grant.body.safetyApprover).toBe(true);
    const mgr = await t.signIn('manager');
    const queue = await mgr.get('/api/override-requests?state=pending');
    expect(queue.body.items.map((r: { id: string }) => r.id)).toEqual([ids.req]);
    expect(queue.body.canDecide).toBe(true);
    expect((await (await t.signIn('admin')).get('/api/override-requests')).body.canDecide).toBe(false);
    const noNote = await mgr.post(`/api/override-requests/${ids.req}/decision`).send({ decision: 'refuse' });
    expect(noNote.status).toBe(400);
    expect(noNote.body.error.fields.note).toEqual(['Write at least 10 characters on why it is refused']);
    const ok = await mgr.post(`/api/override-requests/${ids.req}/decision`).send({ decision: 'approve', note: 'Sacrificial parts.' });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ state: 'approved', decidedBy: { id: mgrId, name: 'Test manager' }, note: 'Sacrificial parts.' });
    const a = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'override.approve', entityId: ids.hotPlan });
    expect(a.actorId).toBe(mgrId);
    expect(a.details.requestId).toBe(ids.req);
    expect(a.details.findings.find((f: { code: string }) => f.code === 'chamber-vs-tjmax').numbers.chamberC.value).toBe(160);
    const again = await mgr
      .post(`/api/override-requests/${ids.req}/decision`)
      .send({ decision: 'refuse', note: 'Changed my mind entirely.' });
    expect(again.status).toBe(409);
  });

  it('a refusal is recorded with its note', async () => {
    const eng = await t.signIn('engineer');
    const req = await eng.post('/api/override-requests').send({ planId: ids.nearPlan, reason: REASON });
    expect(req.status).toBe(201);
    const mgr = await t.signIn('manager');
    const res = await mgr
      .post(`/api/override-requests/${req.body.id}/decision`)
      .send({ decision: 'refuse', note: 'Run it at 80 % of BVCBO instead.' });
    expect(res.status).toBe(200);
    expect(res.body.state).toBe('refused');
    const a = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'override.refuse', entityId: ids.nearPlan });
    expect(a.reason).toBe('Run it at 80 % of BVCBO instead.');
  });
});
