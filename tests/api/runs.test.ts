/**
 * /api/runs: proposals with reasons, booking (and the plan-check override), socket loading with
 * its flags, the people-driven state changes with optimistic locking, every change audited.
 */
import { AuditLogEntity, RigEntity, RigMaintenanceEntity, RunEntity, RunSocketEntity, UserEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { msPerClockHFor } from '../../shared/scheduling';
import { createTestApp, emailFor, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import { grantStartPermit } from '../support/permit';

let t: TestApp;
const ids: Record<string, string> = {};
const demo = (pn: string) => DEMO_DEVICE_TYPES.find((d) => d.partNumber === pn)!;

async function addRig(code: string, over: Partial<RigEntity> = {}): Promise<string> {
  const r = await t.ctx.ds.getRepository(RigEntity).save({
    code,
    name: `Oven ${code}`,
    socketCount: 64,
    maxTempC: 200,
    maxVoltageV: 800,
    humidityCapable: false,
    maxHumidityPct: null,
    mqttUsername: `rig-${code.toLowerCase()}`,
    mqttSecretHash: 'x',
    credentialsIssuedAt: new Date(),
    ...over,
  });
  return r.id;
}

/** These tests book fewer devices than the plan's 8 on purpose: a recorded deviation (issue #19). */
const SHORT = { reason: 'Test fixture: a short sample on purpose' };

const serials = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${String(i + 1).padStart(4, '0')}`);

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  for (const pn of ['HPD-2N140', 'HPD-3P90']) {
    const res = await eng.post('/api/device-types').send(demo(pn));
    expect(res.status).toBe(201);
    ids[pn] = res.body.id;
  }
  for (const [code, pn, prefix] of [
    ['HG2611-A', 'HPD-2N140', 'A'],
    ['HG2612-C', 'HPD-2N140', 'C'],
    ['HG2609-D', 'HPD-3P90', 'D'],
  ]) {
    const res = await eng.post('/api/lots').send({ code, deviceTypeId: ids[pn], quantity: 2400, serials: serials(prefix, 12) });
    expect(res.status).toBe(201);
    ids[code] = res.body.id;
  }
  const plan = (patch: Record<string, unknown>) =>
    eng.post('/api/plans').send({
      name: 'HTRB 145 °C, 80 % VCBO, 1000 h',
      kind: 'htrb',
      deviceTypeId: ids['HPD-2N140'],
      chamberC: 145,
      bias: { vcbV: 112 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 8,
      acceptNumber: 0,
      criteria: {},
      ...patch,
    });
  const ok = await plan({});
  expect(ok.status).toBe(201);
  ids.plan = ok.body.id;
  const hot = await plan({ name: 'HTRB 160 °C (beyond Tj max)', chamberC: 160 });
  expect(hot.status).toBe(201);
  expect(hot.body.checkStatus).toBe('block');
  ids.hotPlan = hot.body.id;
  const cooler = await plan({ name: 'HTRB 125 °C', chamberC: 125 });
  ids.coolerPlan = cooler.body.id;
  ids['OV-01'] = await addRig('OV-01');
  ids['OV-04'] = await addRig('OV-04', { socketCount: 4, maxTempC: 175, maxVoltageV: 100 });
  ids['HC-05'] = await addRig('HC-05', { socketCount: 48, maxTempC: 130, maxVoltageV: 600, humidityCapable: true, maxHumidityPct: 95 });
});
afterAll(async () => {
  await t.close();
});

const auditOf = (runId: string, action: string) =>
  t.ctx.ds.getRepository(AuditLogEntity).find({ where: { entity: 'run', entityId: runId, action }, order: { id: 'ASC' } });

describe('proposals', () => {
  it('ranks the rigs that can take the run and explains every refusal in words', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs/proposals').send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 8 });
    expect(res.status).toBe(200);
    expect(res.body.durationH).toBe(1000 + 2 * 24 + 2); // two holds on the way (168, 500) + heating allowance
    expect(res.body.options.map((o: { rigCode: string }) => o.rigCode)).toEqual(['OV-01']);
    expect(res.body.options[0].delayReasons).toEqual([]);
    expect(res.body.refusals).toEqual([
      {
        rigId: ids['HC-05'],
        rigCode: 'HC-05',
        rigName: 'Oven HC-05',
        reasons: ['Oven HC-05 reaches at most 130 °C; the plan needs 147.5 °C.'],
      },
      {
        rigId: ids['OV-04'],
        rigCode: 'OV-04',
        rigName: 'Oven OV-04',
        reasons: ['Oven OV-04 holds 4 sockets; the plan needs 8.', 'Oven OV-04 supplies at most 100 V of bias; the plan needs 112 V.'],
      },
    ]);
    expect(res.body.blockingFindings).toEqual([]);
  });

  it('names problems with the request itself: a lot of another part, too few registered devices', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs/proposals').send({ planId: ids.plan, lotIds: [ids['HG2609-D']], sampleSize: 20 });
    expect(res.status).toBe(200);
    expect(res.body.problems).toEqual([
      'Lot HG2609-D holds HPD-3P90; the plan is for HPD-2N140.',
      'Lot HG2609-D has 12 registered devices; the run needs 20.',
    ]);
    expect(res.body.options).toEqual([]);
  });

  it('refuses a malformed request with the field named', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs/proposals').send({ planId: ids.plan, lotIds: [], sampleSize: 0 });
    expect(res.status).toBe(400);
    expect(res.body.error.fields).toMatchObject({ lotIds: ['Choose at least one lot'], sampleSize: ['At least one device'] });
  });
});

describe('booking', () => {
  it('books the chosen rig at the proposed start, audited', async () => {
    const eng = await t.signIn('engineer');
    const p = await eng.post('/api/runs/proposals').send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 8 });
    const opt = p.body.options[0];
    const res = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 8, rigId: opt.rigId, start: opt.start });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      code: 'HTRB-2611-A',
      state: 'booked',
      sampleSize: 8,
      loadedCount: 0,
      stressHours: 0,
      targetH: 1000,
      nextReadPointH: 168,
      rig: { code: 'OV-01' },
      lots: [{ code: 'HG2611-A' }],
      partNumber: 'HPD-2N140',
      allowedActions: ['load', 'abort'],
      rowVersion: 1,
      override: null,
    });
    const [a] = await auditOf(res.body.id, 'run.book');
    expect(a.details).toMatchObject({ code: 'HTRB-2611-A', rig: 'OV-01', sampleSize: 8, lots: ['HG2611-A'], planVersion: 1 });
    ids.run = res.body.id;
  });

  it('asks for the plan size per lot when a booking spans two lots; nothing stored without a deviation', async () => {
    // [pub: AEC-Q101 test table] samples are per lot ("77 × 3 lots"); the verdict judges each lot alone.
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const body = { planId: ids.plan, lotIds: [ids['HG2611-A'], ids['HG2612-C']], sampleSize: 8, rigId: ids['OV-01'] };
    const refused = await eng.post('/api/runs').send(body);
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(
      /^Each lot is judged on its own devices: the plan asks for 8 per lot, 16 for 2 lots; this booking holds 8 \(8 short\)\./,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses a plan whose check blocks unless an approved override is named; nothing stored', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const body = { planId: ids.hotPlan, lotIds: [ids['HG2612-C']], sampleSize: 4, deviation: SHORT, rigId: ids['OV-01'] };
    const refused = await eng.post('/api/runs').send(body);
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toBe(
      'The plan check blocks "HTRB 160 °C (beyond Tj max)" (version 1): Chamber hotter than the junction rating; Predicted junction above its rating. ' +
        'It can be booked only with an approved override: an engineer asks for one with a reason, and a second person holding the safety approval approves it.',
    );
    const bad = await eng.post('/api/runs').send({ ...body, override: { requestId: 'because' } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields['override.requestId']).toEqual(['Not a valid override request id']);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('books the blocked plan with an override approved by a second person; the request, approval and findings are audited', async () => {
    const eng = await t.signIn('engineer');
    const admin = await t.signIn('admin');
    const mgrUser = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('manager') });
    expect((await admin.patch(`/api/users/${mgrUser.id}`).send({ safetyApprover: true })).status).toBe(200);
    const reason = 'Margin study agreed with the customer; parts are sacrificial.';
    const asked = await eng.post('/api/override-requests').send({ planId: ids.hotPlan, reason });
    expect(asked.status).toBe(201);
    const mgr = await t.signIn('manager');
    const approved = await mgr.post(`/api/override-requests/${asked.body.id}/decision`).send({ decision: 'approve' });
    expect(approved.status).toBe(200);
    const res = await eng.post('/api/runs').send({
      planId: ids.hotPlan,
      lotIds: [ids['HG2612-C']],
      sampleSize: 4,
      deviation: SHORT,
      rigId: ids['OV-01'],
      override: { requestId: asked.body.id },
    });
    expect(res.status).toBe(201);
    expect(res.body.override).toEqual({ reason, byName: 'Test engineer' });
    expect(res.body.code).toBe('HTRB-2612-C');
    // Another chamber temperature on OV-01: it waits until the first run ends.
    const first = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: ids.run });
    // (An overdue booking slides to now, so the first run's window may have moved by the test's own milliseconds.)
    const gap = Date.parse(res.body.scheduledStart) - first.scheduledEnd!.getTime();
    expect(gap).toBeGreaterThanOrEqual(0);
    expect(gap).toBeLessThan(10_000);
    const [o] = await auditOf(res.body.id, 'run.override');
    expect(o.reason).toBe(reason);
    expect(o.details.approvedById).toBe(mgrUser.id);
    expect(o.details.findings.map((f: { code: string; title: string }) => [f.code, f.title])).toEqual([
      ['chamber-vs-tjmax', 'Chamber hotter than the junction rating'],
      [expect.any(String), 'Predicted junction above its rating'],
    ]);
    // The numbers overridden: chamber 160 °C against Tj max (HPD-2N140: 150 °C in the demo ratings).
    expect(o.details.findings[0].numbers.chamberC.value).toBe(160);
    // Used once: a second booking with the same request is refused.
    const again = await eng.post('/api/runs').send({
      planId: ids.hotPlan,
      lotIds: [ids['HG2612-C']],
      sampleSize: 2,
      deviation: SHORT,
      rigId: ids['OV-01'],
      override: { requestId: asked.body.id },
    });
    expect(again.status).toBe(422);
    expect(again.body.error.message).toBe('The override request was already used by another booking; ask for a new one.');
    ids.hotRun = res.body.id;
  });

  it('refuses a start that overlaps a run at another chamber temperature (409, with the reason)', async () => {
    const eng = await t.signIn('engineer');
    const first = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: ids.run });
    const start = new Date(first.scheduledStart!.getTime() + 60_000);
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/runs').send({
      planId: ids.coolerPlan,
      lotIds: [ids['HG2612-C']],
      sampleSize: 2,
      deviation: SHORT,
      rigId: ids['OV-01'],
      start: start.toISOString(),
    });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(
      // set points are the middle of each plan's +5/−0 K band (145 → 147.5 °C, 125 → 127.5 °C)
      /^The rig is no longer free at .*: Oven OV-01 runs HTRB-2611-A at 147\.5 °C until .*; the plan needs 127\.5 °C\. (.* )?Ask for new proposals\.$/,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('lists and reads runs for every role; the timeline shows rigs × runs', async () => {
    const mgr = await t.signIn('manager');
    const list = await mgr.get('/api/runs?open=1');
    expect(list.status).toBe(200);
    expect(list.body.items.map((r: { code: string }) => r.code).sort()).toEqual(['HTRB-2611-A', 'HTRB-2612-C']);
    const one = await mgr.get(`/api/runs/${ids.run}`);
    expect(one.body.audit.map((a: { action: string }) => a.action)).toEqual(['run.book']);
    const tl = await mgr.get('/api/runs/timeline');
    expect(tl.status).toBe(200);
    const ov1 = tl.body.rows.find((r: { code: string }) => r.code === 'OV-01');
    expect(ov1.bars.map((b: { code: string; state: string }) => `${b.code}:${b.state}`)).toEqual([
      'HTRB-2611-A:booked',
      'HTRB-2612-C:booked',
    ]);
    expect(tl.body.rows.map((r: { code: string }) => r.code)).toEqual(['HC-05', 'OV-01', 'OV-04']);
    expect(tl.body.msPerClockH).toBe(1000);
  });
});

describe('socket loading', () => {
  const version = async () => (await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: ids.run })).rowVersion;

  it('a check (dry run) flags empty, duplicate, wrong-lot, unknown and missing sockets; stores nothing', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.put(`/api/runs/${ids.run}/sockets`).send({
      rowVersion: await version(),
      dryRun: true,
      sockets: { 0: 'A0001', 1: 'A0002', 2: '', 3: 'A0001', 4: 'C0001', 5: 'ZZ-404', 70: 'A0003' },
    });
    expect(res.status).toBe(200);
    expect(res.body.stored).toBe(false);
    expect(res.body.flags).toEqual([
      { socket: 2, serial: '', problem: 'empty', blocking: false, message: 'Socket 2 is left empty.' },
      {
        socket: 3,
        serial: 'A0001',
        problem: 'duplicate',
        blocking: true,
        message: 'Serial A0001 is in socket 0 already; one device cannot sit in two sockets.',
      },
      {
        socket: 4,
        serial: 'C0001',
        problem: 'wrong-lot',
        blocking: true,
        message: "Serial C0001 belongs to lot HG2612-C, not to this run's lot HG2611-A.",
      },
      { socket: 5, serial: 'ZZ-404', problem: 'unknown-serial', blocking: true, message: 'Serial ZZ-404 is not registered in any lot.' },
      {
        socket: 70,
        serial: 'A0003',
        problem: 'no-such-socket',
        blocking: true,
        message: 'Socket 70 does not exist: OV-01 has sockets 0–63.',
      },
    ]);
    expect(res.body).toMatchObject({ loaded: 2, needed: 8, readyToStart: false });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses to store a map with blocking flags (422 with the flags), changing nothing', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.put(`/api/runs/${ids.run}/sockets`).send({ rowVersion: await version(), sockets: { 0: 'A0001', 1: 'A0001' } });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      '1 socket needs attention before this map can be stored; first: Serial A0001 is in socket 0 already; one device cannot sit in two sockets.',
    );
    expect(res.body.error.flags).toHaveLength(1);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('stores a clean map: booked → loading, audited; a stale rowVersion is refused', async () => {
    const op = await t.signIn('operator');
    const v = await version();
    const map = Object.fromEntries(serials('A', 7).map((s, i) => [String(i), s]));
    const res = await op.put(`/api/runs/${ids.run}/sockets`).send({ rowVersion: v, sockets: { ...map, 7: '' } });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      stored: true,
      loaded: 7,
      needed: 8,
      readyToStart: false,
      summary: '7 of 8 devices are placed; 1 still to load.',
    });
    expect(res.body.run).toMatchObject({ state: 'loading', loadedCount: 7, rowVersion: v + 1 });
    const stale = await op.put(`/api/runs/${ids.run}/sockets`).send({ rowVersion: v, sockets: map });
    expect(stale.status).toBe(409);
    expect(stale.body.error.message).toBe(
      `Run HTRB-2611-A changed since you loaded it (it is now loading, version ${v + 1}). Reload and try again.`,
    );
    const [a] = await auditOf(ids.run, 'run.load');
    expect(a.actor).toBe('operator@test.example');
    expect(a.details).toMatchObject({ from: 'booked', to: 'loading', loaded: 7, needed: 8, empty: 1 });
  });

  it('start is refused until every device is loaded', async () => {
    const op = await t.signIn('operator');
    const res = await op.post(`/api/runs/${ids.run}/start`).send({ rowVersion: await version(), confirm: true });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/^Run HTRB-2611-A cannot start: Load all 8 devices before starting; 7 sockets are loaded\. /);
  });

  it('loads the eighth device, then the run is ready', async () => {
    const op = await t.signIn('operator');
    const map = Object.fromEntries(serials('A', 8).map((s, i) => [String(i), s]));
    const res = await op.put(`/api/runs/${ids.run}/sockets`).send({ rowVersion: await version(), sockets: map });
    expect(res.body).toMatchObject({
      stored: true,
      loaded: 8,
      readyToStart: true,
      summary: 'All 8 devices are placed; the run can start.',
    });
    expect(await t.ctx.ds.getRepository(RunSocketEntity).countBy({ runId: ids.run })).toBe(8);
  });
});

describe('state changes by people', () => {
  const version = async (id = ids.run) => (await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id })).rowVersion;

  it('is refused in maintenance, then starts: loading → heating, audited with the actor', async () => {
    const op = await t.signIn('operator');
    const now = Date.now();
    const m = await t.ctx.ds.getRepository(RigMaintenanceEntity).save({
      rigId: ids['OV-01'],
      startsAt: new Date(now - 60_000),
      endsAt: new Date(Date.UTC(2099, 0, 1, 12)),
      reason: 'thermocouple swap',
    });
    await grantStartPermit(t.ctx.ds, ids.run, ids['OV-01']);
    const refused = await op.post(`/api/runs/${ids.run}/start`).send({ rowVersion: await version(), confirm: true });
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toBe(
      'Run HTRB-2611-A cannot start: Oven OV-01 is in maintenance until 2099-01-01 12:00 UTC (thermocouple swap). Nothing was started.',
    );
    await t.ctx.ds.getRepository(RigMaintenanceEntity).delete({ id: m.id });

    const res = await op.post(`/api/runs/${ids.run}/start`).send({ rowVersion: await version(), confirm: true });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ state: 'heating', allowedActions: ['pause', 'abort'] });
    expect(res.body.startedAt).not.toBeNull();
    const [a] = await auditOf(ids.run, 'run.start');
    expect(a.actor).toBe('operator@test.example');
    expect(a.details).toMatchObject({ from: 'loading', to: 'heating', rig: 'OV-01', setC: 145 });
  });

  it('refuses an action the state does not allow (409) and changes nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post(`/api/runs/${ids.run}/measurements-done`).send({ rowVersion: await version() });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe('Run HTRB-2611-A is heating; "Measurements done" is not possible now.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('pause and resume, each audited with its reason', async () => {
    const op = await t.signIn('operator');
    const p = await op.post(`/api/runs/${ids.run}/pause`).send({ rowVersion: await version(), reason: 'Door alarm, checking the seal' });
    expect(p.body.state).toBe('paused');
    const r = await op.post(`/api/runs/${ids.run}/resume`).send({ rowVersion: await version() });
    expect(r.body.state).toBe('heating');
    const [pa] = await auditOf(ids.run, 'run.pause');
    expect(pa.reason).toBe('Door alarm, checking the seal');
    expect((await auditOf(ids.run, 'run.resume')).length).toBe(1);
  });

  it('abort needs a reason; then the run is aborted for good, audited in the same step', async () => {
    const op = await t.signIn('operator');
    const none = await op.post(`/api/runs/${ids.run}/abort`).send({ rowVersion: await version() });
    expect(none.status).toBe(400);
    expect(none.body.error.fields.reason).toBeDefined();
    const res = await op.post(`/api/runs/${ids.run}/abort`).send({ rowVersion: await version(), reason: 'Wrong board fitted in OV-01' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ state: 'aborted', abortReason: 'Wrong board fitted in OV-01', allowedActions: [] });
    const [a] = await auditOf(ids.run, 'run.abort');
    expect(a).toMatchObject({ reason: 'Wrong board fitted in OV-01', actor: 'operator@test.example' });
    expect(a.details).toMatchObject({ from: 'heating', to: 'aborted' });
    const again = await op.post(`/api/runs/${ids.run}/resume`).send({ rowVersion: await version() });
    expect(again.status).toBe(409);
    const detail = await op.get(`/api/runs/${ids.run}`);
    expect(detail.body.audit.map((x: { action: string }) => x.action)).toEqual([
      'run.abort',
      'run.resume',
      'run.pause',
      'run.start',
      'run.load',
      'run.load',
      'run.book',
    ]);
  });

  it('a booked run can be cancelled (aborted) by an engineer; a manager may not', async () => {
    const mgr = await t.signIn('manager');
    expect(
      (await mgr.post(`/api/runs/${ids.hotRun}/abort`).send({ rowVersion: await version(ids.hotRun), reason: 'Not needed' })).status,
    ).toBe(403);
    const eng = await t.signIn('engineer');
    const res = await eng
      .post(`/api/runs/${ids.hotRun}/abort`)
      .send({ rowVersion: await version(ids.hotRun), reason: 'Customer withdrew the request' });
    expect(res.body.state).toBe('aborted');
  });
});

describe('booking a proposal whose start slid', () => {
  // The run ahead on the rig is an overdue booking: its projected window slides with the clock, so
  // the proposed start (its projected end) is taken a little later by the time the engineer books.
  it('follows the slot within the tolerance (audited with the requested start); refuses beyond it', async () => {
    const eng = await t.signIn('engineer');
    const rigId = await addRig('OV-08', { socketCount: 8 });
    const realNow = t.ctx.now;
    const hMs = msPerClockHFor(t.ctx.config.clockRate); // wall ms per clock hour of this server
    try {
      const t0 = Date.now();
      t.ctx.now = () => new Date(t0);
      const ahead = await eng
        .post('/api/runs')
        .send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 2, deviation: SHORT, rigId, start: new Date(t0).toISOString() });
      expect(ahead.status).toBe(201);
      const propose = async () => {
        const p = await eng.post('/api/runs/proposals').send({ planId: ids.coolerPlan, lotIds: [ids['HG2612-C']], sampleSize: 2 });
        return p.body.options.find((o: { rigCode: string }) => o.rigCode === 'OV-08') as { start: string };
      };
      const opt = await propose();
      // 145 °C ahead, 125 °C wanted: the proposal starts when the run ahead ends.
      expect(Date.parse(opt.start)).toBe(Date.parse(ahead.body.scheduledEnd));
      const body = { planId: ids.coolerPlan, lotIds: [ids['HG2612-C']], sampleSize: 2, deviation: SHORT, rigId, start: opt.start };

      // 100 clock hours later the slot is 100 h later: beyond the tolerance (5 % of ~1,000 h), refused.
      t.ctx.now = () => new Date(t0 + 100 * hMs);
      const before = await tableCounts(t.ctx.ds);
      const far = await eng.post('/api/runs').send(body);
      expect(far.status).toBe(409);
      expect(far.body.error.message).toMatch(
        /^The rig is no longer free at .*: Oven OV-08 runs HTRB-2611-A.* at 147\.5 °C until .*; the plan needs 127\.5 °C\. Ask for new proposals\.$/,
      );
      expect(await tableCounts(t.ctx.ds)).toEqual(before);

      // Half a clock hour later: the booking follows the slot to the new end of the run ahead.
      t.ctx.now = () => new Date(t0 + 0.5 * hMs);
      const res = await eng.post('/api/runs').send(body);
      expect(res.status).toBe(201);
      expect(Date.parse(res.body.scheduledStart)).toBe(Date.parse(opt.start) + 0.5 * hMs);
      const [a] = await auditOf(res.body.id, 'run.book');
      expect(a.details).toMatchObject({ requestedStart: new Date(Date.parse(opt.start)).toISOString(), slidH: 0.5 });
    } finally {
      t.ctx.now = realNow;
    }
  });
});
