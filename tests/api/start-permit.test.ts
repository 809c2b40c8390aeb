/**
 * The permit to start (issue #20 item 7): time-zero readings for every loaded device, the rig's own
 * reported sockets against the loading (64 devices booked on a rig that reports 4 sockets), the
 * rig's calibration-due and interlock-test dates (entered by an admin, kept as a record), and the
 * confirmation of the plan's voltage and temperature. Each refusal names what is missing and
 * changes nothing. Then the fault state's way out: retry after the fix (with what was fixed) or abort.
 */
import { AuditLogEntity, RigEntity, RunEntity, RigServiceRecordEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestRig, tableCounts } from '../support/db';
import { recordTimeZero, reportSockets, setRigServiceDates } from '../support/permit';

let t: TestApp;
let rigId: string;
let runId: string;
const DAY_MS = 86_400_000;
const serials = Array.from({ length: 64 }, (_, i) => `P${String(i + 1).padStart(4, '0')}`);

const run = () => t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
const auditOf = (entityId: string, action: string) =>
  t.ctx.ds.getRepository(AuditLogEntity).find({ where: { entityId, action }, order: { id: 'ASC' } });

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140'));
  expect(type.status).toBe(201);
  const lot = await eng.post('/api/lots').send({ code: 'HG2650-P', deviceTypeId: type.body.id, quantity: 500, serials });
  expect(lot.status).toBe(201);
  const plan = await eng.post('/api/plans').send({
    name: 'HTRB 145 °C, 80 % VCBO',
    kind: 'htrb',
    deviceTypeId: type.body.id,
    chamberC: 145,
    bias: { vcbV: 112 },
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    sampleSize: 64,
    acceptNumber: 0,
    criteria: {},
  });
  expect(plan.status).toBe(201);
  // Registered with 64 sockets; the board in the oven reports 4 (the new-user case).
  rigId = await insertTestRig(t.ctx.ds, 'OV-64', { sockets: 64, maxVoltageV: 800 });
  const booked = await eng.post('/api/runs').send({ planId: plan.body.id, lotIds: [lot.body.id], sampleSize: 64, rigId });
  expect(booked.status).toBe(201);
  runId = booked.body.id;
  const op = await t.signIn('operator');
  const loaded = await op
    .put(`/api/runs/${runId}/sockets`)
    .send({ rowVersion: booked.body.rowVersion, sockets: Object.fromEntries(serials.map((s, i) => [String(i), s])) });
  expect(loaded.body.readyToStart).toBe(true);
});
afterAll(async () => {
  await t.close();
});

/** POST start with the run's current rowVersion; the body merged in. */
async function tryStart(body: Record<string, unknown> = { confirm: true }) {
  const op = await t.signIn('operator');
  const before = await tableCounts(t.ctx.ds);
  const r0 = await run();
  const res = await op.post(`/api/runs/${runId}/start`).send({ rowVersion: r0.rowVersion, ...body });
  return { res, before, r0, op };
}

async function expectUnchanged(before: Record<string, number>, r0: RunEntity) {
  expect(await tableCounts(t.ctx.ds)).toEqual(before);
  const r = await run();
  expect({ state: r.state, rowVersion: r.rowVersion, startedAt: r.startedAt }).toEqual({
    state: 'loading',
    rowVersion: r0.rowVersion,
    startedAt: null,
  });
}

describe('the start permit', () => {
  it('lists every check with what is missing before anything is recorded', async () => {
    const op = await t.signIn('operator');
    const res = await op.get(`/api/runs/${runId}/permit`);
    expect(res.status).toBe(200);
    expect(res.body.ok).toBe(false);
    const byKey = Object.fromEntries(res.body.checks.map((c: { key: string; ok: boolean; message: string }) => [c.key, c]));
    expect(byKey.loading).toMatchObject({ ok: true, message: 'All 64 devices are in sockets.' });
    expect(byKey['time-zero'].ok).toBe(false);
    expect(byKey['time-zero'].message).toBe(
      '64 of 64 loaded devices have no time-zero (0 h) reading: P0001 (socket 0), P0002 (socket 1), P0003 (socket 2), P0004 (socket 3), P0005 (socket 4), and 59 more. Measure them and store the 0 h readings before stress.',
    );
    expect(byKey.sockets).toMatchObject({ ok: false });
    expect(byKey.sockets.message).toMatch(/^OV-64 has not reported yet/);
    expect(byKey.calibration).toMatchObject({ ok: false });
    expect(byKey.calibration.message).toMatch(/^No calibration is recorded for OV-64\./);
    expect(byKey.interlock).toMatchObject({ ok: false });
    expect(byKey.interlock.message).toMatch(/^No interlock test is recorded for OV-64\./);
    expect(byKey.maintenance.ok).toBe(true);
    expect(byKey.oven.ok).toBe(true);
    expect(res.body.confirm).toEqual({ rigCode: 'OV-64', chamberC: 145, humidityPct: null, biasV: 112, biasText: 'reverse bias of 112 V' });
  });

  it('refuses a start without the confirmation (400) and changes nothing', async () => {
    const { res, before, r0 } = await tryStart({});
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body.error)).toContain("Confirm the plan's voltage and temperature before starting");
    await expectUnchanged(before, r0);
  });

  it('refuses while time-zero readings are missing, naming the devices; nothing changes', async () => {
    await recordTimeZero(t.ctx.ds, runId, 63); // every device but the last
    await setRigServiceDates(t.ctx.ds, rigId);
    await reportSockets(
      t.ctx.ds,
      rigId,
      Array.from({ length: 64 }, (_, k) => k),
    );
    const { res, before, r0 } = await tryStart();
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      'Run HTRB-2650-P cannot start: 1 of 64 loaded devices have no time-zero (0 h) reading: P0064 (socket 63). Measure them and store the 0 h readings before stress. Nothing was started.',
    );
    expect(res.body.error.permit.ok).toBe(false);
    await expectUnchanged(before, r0);
  });

  it('refuses 64 devices on a rig whose own telemetry reports 4 sockets, with the numbers; nothing changes', async () => {
    await recordTimeZero(t.ctx.ds, runId); // the 64th
    await t.ctx.ds.query(`DELETE FROM telemetry_batches WHERE rig_id = $1`, [rigId]);
    await reportSockets(t.ctx.ds, rigId, [0, 1, 2, 3], { seq: 5 });
    const { res, before, r0 } = await tryStart();
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(
      /^Run HTRB-2650-P cannot start: OV-64 reports 4 sockets \(0–3\) in its latest telemetry \(\d{4}-\d\d-\d\d \d\d:\d\d UTC\); this run loads 64 devices, 60 of them in sockets the rig does not report \(4–63\)\. /,
    );
    expect(res.body.error.message).not.toContain('time-zero');
    await expectUnchanged(before, r0);
  });

  it('refuses a rig whose calibration is past due, and one whose interlock test lapsed; nothing changes', async () => {
    await reportSockets(
      t.ctx.ds,
      rigId,
      Array.from({ length: 64 }, (_, k) => k),
      { seq: 6 },
    );
    const now = Date.now();
    await setRigServiceDates(t.ctx.ds, rigId, {
      calibrationDueAt: new Date('2026-01-10T00:00:00Z'),
      interlockTestedAt: new Date(now - DAY_MS),
    });
    let { res, before, r0 } = await tryStart();
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      'Run HTRB-2650-P cannot start: The calibration of OV-64 was due on 2026-01-10. Have it calibrated and record the new due date on the Rigs page. Nothing was started.',
    );
    await expectUnchanged(before, r0);
    // Interlocks tested 31 days ago: a test counts for 30 days (INTERLOCK_TEST_VALID_DAYS, Emberlot's default).
    await setRigServiceDates(t.ctx.ds, rigId, { interlockTestedAt: new Date('2026-01-01T00:00:00Z') });
    ({ res, before, r0 } = await tryStart());
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      "Run HTRB-2650-P cannot start: OV-64's interlocks were last tested on 2026-01-01; a test counts for 30 days, so a new one was due by 2026-01-31. Test them and record it on the Rigs page. Nothing was started.",
    );
    await expectUnchanged(before, r0);
  });
});

describe('the rig service record (admin)', () => {
  it('refuses a calibration due before it was done, and work in the future; stores nothing', async () => {
    const admin = await t.signIn('admin');
    const before = await tableCounts(t.ctx.ds);
    const backwards = await admin
      .post('/api/rigs/OV-64/service-records')
      .send({ kind: 'calibration', doneOn: '2026-11-02', dueOn: '2026-11-01' });
    expect(backwards.status).toBe(400);
    expect(backwards.body.error.fields.dueOn).toEqual(['The next calibration falls due after the one just done']);
    const future = await admin.post('/api/rigs/OV-64/service-records').send({ kind: 'interlock-test', doneOn: '2999-01-01' });
    expect(future.status).toBe(400);
    expect(future.body.error.message).toBe('The interlock test date 2999-01-01 lies in the future; enter work that was done.');
    const badDay = await admin.post('/api/rigs/OV-64/service-records').send({ kind: 'interlock-test', doneOn: '01/12/2026' });
    expect(badDay.status).toBe(400);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const op = await t.signIn('operator');
    const notAdmin = await op.post('/api/rigs/OV-64/service-records').send({ kind: 'interlock-test', doneOn: '2026-11-01' });
    expect(notAdmin.status).toBe(403);
  });

  it('records a calibration and an interlock test: kept as records, the rig dates move, audited', async () => {
    const admin = await t.signIn('admin');
    const today = new Date().toISOString().slice(0, 10);
    const cal = await admin
      .post('/api/rigs/OV-64/service-records')
      .send({ kind: 'calibration', doneOn: today, dueOn: '2099-06-30', note: 'TC and HV supply' });
    expect(cal.status).toBe(201);
    expect(cal.body.calibrationDueAt).toBe('2099-06-30T00:00:00.000Z');
    const ilk = await admin.post('/api/rigs/OV-64/service-records').send({ kind: 'interlock-test', doneOn: today });
    expect(ilk.status).toBe(201);
    expect(ilk.body.interlockTestedAt).toBe(`${today}T00:00:00.000Z`);
    expect(Date.parse(ilk.body.interlockDueAt) - Date.parse(ilk.body.interlockTestedAt)).toBe(30 * DAY_MS);
    const list = await admin.get('/api/rigs/OV-64/service-records');
    expect(list.body.items.map((r: { kind: string }) => r.kind).sort()).toEqual(['calibration', 'interlock-test']);
    expect(await t.ctx.ds.getRepository(RigServiceRecordEntity).countBy({ rigId })).toBe(2);
    const [a] = await auditOf(rigId, 'rig.calibration');
    expect(a.details).toMatchObject({ doneOn: today, dueOn: '2099-06-30' });
    expect((await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ id: rigId })).calibrationDueAt?.toISOString()).toBe(
      '2099-06-30T00:00:00.000Z',
    );
  });
});

describe('start, fault, retry', () => {
  it('starts once every check passes: loading → heating, the confirmed voltage and temperature audited', async () => {
    const { res } = await tryStart({ confirm: true, reason: 'first run of the new board' });
    expect(res.status).toBe(200);
    expect(res.body.state).toBe('heating');
    const [a] = await auditOf(runId, 'run.start');
    expect(a.details).toMatchObject({
      from: 'loading',
      to: 'heating',
      confirmed: { chamberC: 145, biasV: 112, bias: 'reverse bias of 112 V' },
    });
    expect(a.details.permit).toHaveLength(7);
  });

  it('a run in fault shows it, refuses retry without what was fixed, and refuses retry while a check fails; nothing changes', async () => {
    await t.ctx.ds
      .getRepository(RunEntity)
      .update(
        { id: runId },
        { state: 'fault', faultReason: 'OV-64 refused the bias-on command: "no socket 4, 5 on this rig".', faultAt: new Date() },
      );
    const op = await t.signIn('operator');
    const view = await op.get(`/api/runs/${runId}`);
    expect(view.body).toMatchObject({ state: 'fault', stateLabel: 'Rig fault', allowedActions: ['retry', 'abort'] });
    expect(view.body.fault.reason).toBe('OV-64 refused the bias-on command: "no socket 4, 5 on this rig".');
    const r0 = await run();
    const before = await tableCounts(t.ctx.ds);
    const noReason = await op.post(`/api/runs/${runId}/retry`).send({ rowVersion: r0.rowVersion });
    expect(noReason.status).toBe(400);
    await setRigServiceDates(t.ctx.ds, rigId, { interlockTestedAt: null });
    const refused = await op
      .post(`/api/runs/${runId}/retry`)
      .send({ rowVersion: r0.rowVersion, reason: 'board swapped for the 64-socket one' });
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(
      /^Run HTRB-2650-P cannot heat again yet: No interlock test is recorded for OV-64\. .* It stays in fault\.$/,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await run()).state).toBe('fault');
    const manager = await t.signIn('manager');
    expect((await manager.post(`/api/runs/${runId}/retry`).send({ rowVersion: r0.rowVersion, reason: 'not mine to do' })).status).toBe(403);
  });

  it('retry after the fix: fault → heating, audited with what was fixed; the fault reason stays on record', async () => {
    await setRigServiceDates(t.ctx.ds, rigId);
    const op = await t.signIn('operator');
    const r0 = await run();
    const res = await op
      .post(`/api/runs/${runId}/retry`)
      .send({ rowVersion: r0.rowVersion, reason: 'board swapped for the 64-socket one' });
    expect(res.status).toBe(200);
    expect(res.body.state).toBe('heating');
    expect(res.body.fault.reason).toMatch(/^OV-64 refused the bias-on command/);
    const [a] = await auditOf(runId, 'run.retry');
    expect(a.reason).toBe('board swapped for the 64-socket one');
    expect(a.details).toMatchObject({ from: 'fault', to: 'heating' });
  });

  it('abort from fault', async () => {
    await t.ctx.ds.getRepository(RunEntity).update({ id: runId }, { state: 'fault' });
    const op = await t.signIn('engineer');
    const res = await op
      .post(`/api/runs/${runId}/abort`)
      .send({ rowVersion: (await run()).rowVersion, reason: 'board cannot be fixed this week' });
    expect(res.status).toBe(200);
    expect(res.body.state).toBe('aborted');
  });
});
