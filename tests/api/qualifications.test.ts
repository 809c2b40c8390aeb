/**
 * Qualifications (issue #22 item 1): created from a template, cells filled from the runs of their
 * kind on their lot with the lot verdict's own judgement, waivers with a reason, outside results for
 * groups with no run kind, bad input refused with nothing changed, roles; and the report (PDF and
 * CSV) compared with the lot views for the same lots.
 *
 * Sample sizes in the AEC-Q101 template (3 lots × 77, accept 0) are from memory (shared/REFERENCE.md
 * A9) — the test checks that the matrix carries the template's numbers, not that they are right.
 */
import { randomUUID } from 'node:crypto';
import { parse } from 'csv-parse/sync';
import {
  AuditLogEntity,
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  QualificationCellWithdrawalEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  StressPlanEntity,
} from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { transitionRun } from '../../server/modules/runs/run-engine';
import type { LotDetail } from '../../shared/schemas/analytics';
import type { QualCellDrift, QualCellView, QualificationDetail } from '../../shared/schemas/qualifications';
import { QUAL_TEMPLATES } from '../../shared/qualification/templates';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestDeviceType, insertTestHtrbPlan, tableCounts } from '../support/db';
import { pdfText } from '../support/pdf-text';

let t: TestApp;
const ids: Record<string, string> = {};
let plan: StressPlanEntity;
let rig: RigEntity;

async function addLot(code: string, typeId: string): Promise<{ lot: LotEntity; devices: DeviceEntity[] }> {
  const m = t.ctx.ds.manager;
  const lot = await m.save(m.create(LotEntity, { code, deviceTypeId: typeId, quantity: 1000, notes: '' }));
  const devices = await m.save(
    Array.from({ length: 20 }, (_, i) =>
      m.create(DeviceEntity, { lotId: lot.id, serial: `${code.slice(-1)}${String(i + 1).padStart(4, '0')}` }),
    ),
  );
  ids[code] = lot.id;
  return { lot, devices };
}

let lotC: { lot: LotEntity; devices: DeviceEntity[] };
let qualType: DeviceTypeEntity;

/**
 * A run of the file's HTRB plan on OV-97 for one lot, its hFE drifting −2 % and ICBO ×1.2 per 1000 h
 * (no noise), started 60 days ago: finished at 1000 h read at every point, or stressing at 560 h
 * read to 500 h. `over` changes any of that (a stressing run at its end, say).
 */
function history(
  code: string,
  l: { lot: LotEntity; devices: DeviceEntity[] },
  state: 'finished' | 'stressing',
  failures?: Array<{ serial: string; atH: number; mode: 'gain' }>,
  over: { startedAt?: Date; stressHours?: number; measuredH?: number[] } = {},
) {
  return insertHistoryRun(t.ctx.ds.manager, {
    code,
    plan,
    deviceType: qualType,
    rig,
    lots: [{ ...l, drift: { hfeDriftPctPer1000h: -2, leakageGrowthPer1000h: 1.2 } }],
    state,
    startedAt: new Date(Date.now() - 60 * 86400_000),
    stressHours: state === 'finished' ? 1000 : 560,
    measuredH: state === 'finished' ? [0, 168, 500, 1000] : [0, 168, 500],
    noise: 0,
    failures,
    ...over,
  });
}

beforeAll(async () => {
  t = await createTestApp();
  const m = t.ctx.ds.manager;
  rig = await m.save(
    m.create(RigEntity, {
      code: 'OV-97',
      name: 'qualification test oven',
      socketCount: 64,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: 'rig-ov-97',
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
      calibrationDueAt: new Date('2027-06-01T00:00:00Z'),
    }),
  );
  const type = await insertTestDeviceType(m, 'HPD-Q100');
  const other = await insertTestDeviceType(m, 'HPD-Q200');
  ids.type = type.id;
  ids.other = other.id;
  plan = await insertTestHtrbPlan(m, type.id, { name: 'HTRB qualification plan', sampleSize: 20 });
  qualType = type;
  await history('R-QA', await addLot('HG9801-A', type.id), 'finished');
  await history('R-QB', await addLot('HG9801-B', type.id), 'stressing');
  lotC = await addLot('HG9801-C', type.id);
  await addLot('HG9801-X', other.id);
});
afterAll(async () => {
  await t.close();
});

const cellsOf = (d: QualificationDetail, groupKey: string) => d.cells.filter((c) => c.groupKey === groupKey);
let qual: QualificationDetail;

describe('create from a template', () => {
  test('AEC-Q101 with three lots: a cell per group and lot, samples from the template', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/qualifications').send({
      name: 'HPD-Q100 automotive',
      templateKey: 'aec-q101',
      deviceTypeIds: [ids.type],
      lotIds: [ids['HG9801-A'], ids['HG9801-B'], ids['HG9801-C']],
    });
    expect(res.status).toBe(201);
    qual = res.body;
    const tpl = QUAL_TEMPLATES['aec-q101'];
    const expected = tpl.groups.reduce((n, g) => n + Math.min(g.lots, 3), 0);
    expect(qual.cells).toHaveLength(expected); // 5 groups × 3 lots + 4 one-lot groups = 19
    expect(expected).toBe(19);
    expect(qual.code).toMatch(/^QUAL-\d{3}$/);
    const htrb = cellsOf(qual, 'htrb');
    expect(htrb.map((c) => [c.lotCode, c.plannedSample, c.acceptNumber])).toEqual([
      ['HG9801-A', 77, 0],
      ['HG9801-B', 77, 0],
      ['HG9801-C', 77, 0],
    ]);
    // Preconditioned groups first (AEC-Q101: preconditioning before TC, AC, H3TRB, IOL — from memory).
    const order = [...new Set(qual.cells.map((c) => c.groupKey))];
    expect(order.slice(0, 4)).toEqual(['tc', 'ac', 'h3trb', 'iol']);
    expect(qual.status).toBe('in-progress');
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneBy({ action: 'qualification.create', entityId: qual.id });
    expect(audit?.actor).toBe('engineer@test.example');
  });

  test('cells take their state and verdict from the lot views', async () => {
    const eng = await t.signIn('engineer');
    const [a, b, c] = cellsOf(qual, 'htrb');
    const viewA: LotDetail = (await eng.get(`/api/analytics/lots/${ids['HG9801-A']}`)).body;
    const planA = viewA.plans.find((p) => p.kind === 'htrb')!;
    expect(planA.verdict).toBe('passed');
    // The lot passed its plan's 20 devices; the cell plans the template's 77: not passed yet (common practice).
    expect(a.state).toBe('awaiting-verdict');
    expect(a.verdictReasons[0]).toBe('The verdict judged 20 devices; this cell plans 77.');
    expect(a.verdict).toBe(planA.verdict);
    expect(a.sample).toEqual({ booked: planA.sample.booked, judged: planA.sample.judged, failures: planA.sample.failures });
    expect(a.runs.map((r) => r.code)).toEqual(['R-QA']);
    expect(b.state).toBe('under-stress');
    expect(b.runs.map((r) => r.state)).toEqual(['stressing']);
    expect(c.state).toBe('not-started');
    expect(c.runs).toEqual([]);
    // TC has no plan kind on this branch's plans yet: not started, with no projection.
    for (const x of cellsOf(qual, 'tc')) {
      expect(x.state).toBe('not-started');
      expect(x.projectedFinish).toBeNull();
    }
    expect(qual.projectedFinish).toBeNull();
    expect(qual.left.some((l) => l.includes('Temperature cycling (TC) on lot HG9801-A: not started'))).toBe(true);
  });

  test('the cell fills as runs land: booked, then failed when the lot verdict fails', async () => {
    const eng = await t.signIn('engineer');
    const m = t.ctx.ds.manager;
    const start = new Date(Date.now() + 2 * 86400_000);
    const booked = await m.save(
      m.create(RunEntity, {
        code: 'R-QC0',
        planId: plan.id,
        rigId: rig.id,
        state: 'booked',
        sampleSize: 20,
        scheduledStart: start,
        scheduledEnd: new Date(start.getTime() + 1100 * 3600_000),
        stateChangedAt: new Date(),
      }),
    );
    await m.insert(RunLotEntity, { runId: booked.id, lotId: lotC.lot.id });
    let d: QualificationDetail = (await eng.get(`/api/qualifications/${qual.id}`)).body;
    let c = cellsOf(d, 'htrb')[2];
    expect(c.state).toBe('booked');
    expect(c.projectedFinish).not.toBeNull();
    expect(c.runs[0].projectedEnd).toBe(c.projectedFinish);
    // Hand computation: a booking in the future keeps its window, start + (scheduledEnd − scheduledStart) = start + 1100 h.
    expect(Date.parse(c.projectedFinish!)).toBe(start.getTime() + 1100 * 3600_000);

    await m.delete(RunEntity, { id: booked.id });
    await history('R-QC', lotC, 'finished', [{ serial: 'C0003', atH: 500, mode: 'gain' }]);
    d = (await eng.get(`/api/qualifications/${qual.id}`)).body;
    c = cellsOf(d, 'htrb')[2];
    const viewC: LotDetail = (await eng.get(`/api/analytics/lots/${ids['HG9801-C']}`)).body;
    const planC = viewC.plans.find((p) => p.kind === 'htrb')!;
    expect(planC.verdict).toBe('failed');
    expect(c.state).toBe('failed');
    expect(c.sample?.failures).toBe(planC.sample.failures);
    expect(c.sample?.failures).toBe(1);
    expect(d.status).toBe('failed');
    qual = d;
  });
});

describe('waivers and outside results', () => {
  test('a waiver without a reason is refused and changes nothing; with one it is recorded and audited', async () => {
    const eng = await t.signIn('engineer');
    const cell = cellsOf(qual, 'sd')[0];
    const before = await tableCounts(t.ctx.ds);
    const bad = await eng.post(`/api/qualifications/${qual.id}/cells/${cell.id}/waiver`).send({ reason: '  short ' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.reason[0]).toMatch(/at least 10 characters/);
    const none = await eng.post(`/api/qualifications/${qual.id}/cells/${cell.id}/waiver`).send({});
    expect(none.status).toBe(400);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await eng
      .post(`/api/qualifications/${qual.id}/cells/${cell.id}/waiver`)
      .send({ reason: 'Same lead frame and plating as HPD-Q050, solderability shown on its qualification.' });
    expect(ok.status).toBe(200);
    const waived = ok.body.cells.find((c: { id: string }) => c.id === cell.id);
    expect(waived.state).toBe('waived');
    expect(waived.waiver.by).toBe('Test engineer');
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneBy({ action: 'qualification.cell-waive', entityId: qual.id });
    expect(audit?.reason).toMatch(/Same lead frame/);
  });

  test('an outside result: only for a group with no run kind, validated, then the cell passes', async () => {
    const eng = await t.signIn('engineer');
    const esd = cellsOf(qual, 'esd-hbm')[0];
    const htrb = cellsOf(qual, 'htrb')[2];
    const body = { result: 'pass', by: 'Harrowgate ESD bench', at: '2026-11-02T10:00:00Z', document: 'HPD-ESD-0412' };
    const before = await tableCounts(t.ctx.ds);
    expect((await eng.post(`/api/qualifications/${qual.id}/cells/${htrb.id}/external`).send(body)).status).toBe(422);
    const badDate = await eng.post(`/api/qualifications/${qual.id}/cells/${esd.id}/external`).send({ ...body, at: 'yesterday' });
    expect(badDate.status).toBe(400);
    expect(badDate.body.error.fields.at).toBeDefined();
    const badResult = await eng.post(`/api/qualifications/${qual.id}/cells/${esd.id}/external`).send({ ...body, result: 'ok' });
    expect(badResult.status).toBe(400);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await eng.post(`/api/qualifications/${qual.id}/cells/${esd.id}/external`).send(body);
    expect(ok.status).toBe(200);
    const cell = ok.body.cells.find((c: { id: string }) => c.id === esd.id);
    expect(cell.state).toBe('passed');
    expect(cell.external).toMatchObject({
      result: 'pass',
      by: 'Harrowgate ESD bench',
      document: 'HPD-ESD-0412',
      recordedBy: 'Test engineer',
    });
    expect((await eng.post(`/api/qualifications/${qual.id}/cells/${esd.id}/external`).send(body)).status).toBe(409);
  });

  test('editing a cell: accept number below the sample; the pass stands once the cell asks for the sample judged', async () => {
    const eng = await t.signIn('engineer');
    const cell = cellsOf(qual, 'htrb')[0];
    expect((await eng.patch(`/api/qualifications/${qual.id}/cells/${cell.id}`).send({ plannedSample: 5, acceptNumber: 5 })).status).toBe(
      422,
    );
    expect((await eng.patch(`/api/qualifications/${qual.id}/cells/${cell.id}`).send({})).status).toBe(400);
    const ok = await eng.patch(`/api/qualifications/${qual.id}/cells/${cell.id}`).send({ plannedSample: 20 });
    expect(ok.status).toBe(200);
    const edited = ok.body.cells.find((c: { id: string }) => c.id === cell.id);
    expect(edited.plannedSample).toBe(20);
    // With the cell's sample at the 20 the lot was judged on, the lot verdict's pass stands.
    expect(edited.state).toBe('passed');
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneBy({ action: 'qualification.cell-update', entityId: qual.id });
    expect(audit?.details).toMatchObject({ before: { plannedSample: 77 }, after: { plannedSample: 20 } });
  });
});

describe('withdrawing a waiver or an outside result', () => {
  const reason = 'The customer did not accept the similarity argument; solderability is to be tested on this lot.';

  test('wrong roles are refused, bad input is refused by the schema; nothing changes', async () => {
    const cell = cellsOf(qual, 'sd')[0];
    const url = `/api/qualifications/${qual.id}/cells/${cell.id}/withdraw`;
    const mgr = await t.signIn('manager');
    const op = await t.signIn('operator');
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    expect((await mgr.post(url).send({ record: 'waiver', reason })).status).toBe(403);
    expect((await op.post(url).send({ record: 'waiver', reason })).status).toBe(403);
    const noReason = await eng.post(url).send({ record: 'waiver' });
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.fields.reason[0]).toBe('A withdrawal needs a reason');
    const short = await eng.post(url).send({ record: 'waiver', reason: ' too short ' });
    expect(short.status).toBe(400);
    expect(short.body.error.fields.reason[0]).toMatch(/at least 10 characters/);
    const what = await eng.post(url).send({ record: 'verdict', reason });
    expect(what.status).toBe(400);
    expect(what.body.error.fields.record[0]).toBe('Say what to withdraw: the waiver or the outside result');
    expect(
      (await eng.post(`/api/qualifications/${qual.id}/cells/${randomUUID()}/withdraw`).send({ record: 'waiver', reason })).status,
    ).toBe(404);
    // The cell has a waiver but no outside result.
    const none = await eng.post(url).send({ record: 'external', reason });
    expect(none.status).toBe(409);
    expect(none.body.error.message).toMatch(/no outside result to withdraw/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  test('a waiver withdrawn: the record is kept and audited, the cell returns to its own state; twice is a 409 that changes nothing', async () => {
    const eng = await t.signIn('engineer');
    const cell = cellsOf(qual, 'sd')[0];
    const current: QualificationDetail = (await eng.get(`/api/qualifications/${qual.id}`)).body;
    const waiver = current.cells.find((c) => c.id === cell.id)!.waiver!;
    expect(waiver.reason).toMatch(/Same lead frame/);
    const ok = await eng.post(`/api/qualifications/${qual.id}/cells/${cell.id}/withdraw`).send({ record: 'waiver', reason });
    expect(ok.status).toBe(200);
    const after: QualCellView = ok.body.cells.find((c: QualCellView) => c.id === cell.id);
    // Solderability has no run kind and no outside result: back to not started.
    expect(after.state).toBe('not-started');
    expect(after.waiver).toBeNull();
    expect(after.withdrawn).toEqual([
      {
        record: 'waiver',
        text: waiver.reason,
        recordedBy: 'Test engineer',
        recordedAt: waiver.at,
        reason,
        by: 'Test engineer',
        at: expect.any(String),
      },
    ]);
    expect(ok.body.cellsDone).toBe(current.cellsDone - 1);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneBy({ action: 'qualification.cell-withdraw', entityId: qual.id });
    expect(audit?.reason).toBe(reason);
    expect(audit?.details).toMatchObject({ cellId: cell.id, record: 'waiver', withdrawn: { text: waiver.reason } });

    const before = await tableCounts(t.ctx.ds);
    const again = await eng.post(`/api/qualifications/${qual.id}/cells/${cell.id}/withdraw`).send({ record: 'waiver', reason });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe('This cell has no waiver to withdraw; it may have been withdrawn already.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);

    // The cell can be waived anew; the withdrawn waiver stays on its record.
    const rewaive = await eng
      .post(`/api/qualifications/${qual.id}/cells/${cell.id}/waiver`)
      .send({ reason: 'Solderability shown on the sister part HPD-Q050 with the customer’s written agreement.' });
    expect(rewaive.status).toBe(200);
    const re: QualCellView = rewaive.body.cells.find((c: QualCellView) => c.id === cell.id);
    expect(re.state).toBe('waived');
    expect(re.withdrawn).toHaveLength(1);
    qual = rewaive.body;
  });

  test('two withdrawals of one waiver at once: one is recorded, the other gets the 409', async () => {
    const eng = await t.signIn('engineer');
    const pd = cellsOf(qual, 'pd')[0];
    const waived = await eng
      .post(`/api/qualifications/${qual.id}/cells/${pd.id}/waiver`)
      .send({ reason: 'Outline drawing shared with HPD-Q050, measured on its release.' });
    expect(waived.status).toBe(200);
    const url = `/api/qualifications/${qual.id}/cells/${pd.id}/withdraw`;
    const answers = await Promise.all(
      [1, 2].map(() => eng.post(url).send({ record: 'waiver', reason: 'The drawing changed in revision C; measure this lot.' })),
    );
    expect(answers.map((a) => a.status).sort()).toEqual([200, 409]);
    const rows = await t.ctx.ds.getRepository(QualificationCellWithdrawalEntity).findBy({ cellId: pd.id });
    expect(rows).toHaveLength(1);
    qual = (await eng.get(`/api/qualifications/${qual.id}`)).body;
  });

  test('an outside result withdrawn: the cell is open again and takes a new result', async () => {
    const eng = await t.signIn('engineer');
    const esd = cellsOf(qual, 'esd-hbm')[0];
    expect(esd.state).toBe('passed');
    const ok = await eng
      .post(`/api/qualifications/${qual.id}/cells/${esd.id}/withdraw`)
      .send({ record: 'external', reason: 'The ESD bench was out of calibration on the test date (HPD-CAL-0412).' });
    expect(ok.status).toBe(200);
    const after: QualCellView = ok.body.cells.find((c: QualCellView) => c.id === esd.id);
    expect(after.state).toBe('not-started');
    expect(after.external).toBeNull();
    expect(after.withdrawn[0]).toMatchObject({
      record: 'external',
      text: 'pass - Harrowgate ESD bench, tested 2026-11-02 10:00 UTC, document HPD-ESD-0412',
      recordedBy: 'Test engineer',
      recordedAt: '2026-11-02T10:00:00.000Z',
    });
    const twice = await eng
      .post(`/api/qualifications/${qual.id}/cells/${esd.id}/withdraw`)
      .send({ record: 'external', reason: 'The ESD bench was out of calibration on the test date (HPD-CAL-0412).' });
    expect(twice.status).toBe(409);
    const again = await eng
      .post(`/api/qualifications/${qual.id}/cells/${esd.id}/external`)
      .send({ result: 'pass', by: 'Harrowgate ESD bench', at: '2026-11-20T10:00:00Z', document: 'HPD-ESD-0412-R' });
    expect(again.status).toBe(200);
    expect(again.body.cells.find((c: QualCellView) => c.id === esd.id).state).toBe('passed');
    qual = again.body;
  });
});

describe('bad input and roles', () => {
  test('a family needs its generic-data rule; a lot of another part is refused; nothing changes', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const family = await eng
      .post('/api/qualifications')
      .send({ name: 'Family', templateKey: 'jesd47', deviceTypeIds: [ids.type, ids.other], lotIds: [ids['HG9801-A']] });
    expect(family.status).toBe(400);
    expect(family.body.error.fields.familyRule[0]).toMatch(/generic-data rule/);
    const foreign = await eng
      .post('/api/qualifications')
      .send({ name: 'Wrong lot', templateKey: 'jesd47', deviceTypeIds: [ids.type], lotIds: [ids['HG9801-X']] });
    expect(foreign.status).toBe(422);
    expect(foreign.body.error.message).toMatch(/HG9801-X/);
    const badTemplate = await eng
      .post('/api/qualifications')
      .send({ name: 'X', templateKey: 'aec-q999', deviceTypeIds: [ids.type], lotIds: [ids['HG9801-A']] });
    expect(badTemplate.status).toBe(400);
    const missing = await eng
      .post('/api/qualifications')
      .send({ name: 'Missing lot', templateKey: 'jesd47', deviceTypeIds: [ids.type], lotIds: [randomUUID()] });
    expect(missing.status).toBe(422);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await eng.post('/api/qualifications').send({
      name: 'HPD-Q family',
      templateKey: 'mil-prf-19500',
      deviceTypeIds: [ids.type, ids.other],
      lotIds: [ids['HG9801-A'], ids['HG9801-X']],
      familyRule: 'HPD-Q100 and HPD-Q200 share die and package; the larger die (Q100) stands for both in life tests.',
    });
    expect(ok.status).toBe(201);
    expect(ok.body.familyRule).toMatch(/share die and package/);
    // MIL-PRF-19500 groups ask for one lot each: no cell on the second lot.
    expect(ok.body.cells.every((c: { lotCode: string }) => c.lotCode === 'HG9801-A')).toBe(true);
  });

  test('roles: managers read and download, only engineers change; operators do not read', async () => {
    const mgr = await t.signIn('manager');
    expect((await mgr.get('/api/qualifications')).status).toBe(200);
    expect((await mgr.get(`/api/qualifications/${qual.id}`)).status).toBe(200);
    expect((await mgr.post('/api/qualifications').send({})).status).toBe(403);
    const cell = qual.cells[0];
    expect((await mgr.post(`/api/qualifications/${qual.id}/cells/${cell.id}/waiver`).send({ reason: 'a reason long enough' })).status).toBe(
      403,
    );
    const op = await t.signIn('operator');
    expect((await op.get('/api/qualifications')).status).toBe(403);
    expect((await op.get(`/api/qualifications/${qual.id}/report.pdf`)).status).toBe(403);
    const eng = await t.signIn('engineer');
    expect((await eng.get(`/api/qualifications/${randomUUID()}`)).status).toBe(404);
    expect((await eng.get('/api/qualifications/not-an-id')).status).toBe(400);
  });
});

describe("a cell's drift", () => {
  test("the cell's runs give the lot screen's own distributions; a cell without runs or with no run kind says why", async () => {
    const mgr = await t.signIn('manager');
    const [a, b] = cellsOf(qual, 'htrb');
    const drift: QualCellDrift = (await mgr.get(`/api/qualifications/${qual.id}/cells/${a.id}/drift`)).body;
    const view: LotDetail = (await mgr.get(`/api/analytics/lots/${ids['HG9801-A']}`)).body;
    // HG9801-A has one run (R-QA): the cell's chart and the lot screen's chart read the same numbers.
    expect(drift.runCodes).toEqual(['R-QA']);
    expect(drift.note).toBeNull();
    expect(drift.readPoints).toEqual(view.readPoints);
    expect(drift.trends).toEqual(view.trends);
    expect(drift.criteria).toEqual(view.criteria);
    expect(drift.readPoints.map((r) => [r.hours, r.devicesMeasured])).toEqual([
      [0, 20],
      [168, 20],
      [500, 20],
      [1000, 20],
    ]);
    // Noise-free history with -2 %/1000 h (insertHistoryRun, noise 0): the mean hFE change at 1000 h is -2 % (hand computation).
    expect(drift.readPoints[3].hfeChangePct!.mean).toBeCloseTo(-2, 6);
    const under: QualCellDrift = (await mgr.get(`/api/qualifications/${qual.id}/cells/${b.id}/drift`)).body;
    expect(under.runCodes).toEqual(['R-QB']);
    expect(under.readPoints.map((r) => r.hours)).toEqual([0, 168, 500]);
    const tc = cellsOf(qual, 'tc')[0];
    expect((await mgr.get(`/api/qualifications/${qual.id}/cells/${tc.id}/drift`)).body).toMatchObject({
      runCodes: [],
      readPoints: [],
      note: 'No run of this kind on this lot yet.',
    });
    const esd = cellsOf(qual, 'esd-hbm')[0];
    expect((await mgr.get(`/api/qualifications/${qual.id}/cells/${esd.id}/drift`)).body.note).toMatch(/recorded from outside/);
    expect((await mgr.get(`/api/qualifications/${qual.id}/cells/${randomUUID()}/drift`)).status).toBe(404);
    const op = await t.signIn('operator');
    expect((await op.get(`/api/qualifications/${qual.id}/cells/${a.id}/drift`)).status).toBe(403);
  });
});

describe('report', () => {
  test('PDF: a real PDF of several pages', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr
      .get(`/api/qualifications/${qual.id}/report.pdf`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const pdf: Buffer = res.body;
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    expect(pdf.length).toBeGreaterThan(5000);
    const pages = pdf.toString('latin1').match(/\/Type \/Page\b/g) ?? [];
    expect(pages.length).toBeGreaterThanOrEqual(2);
  });

  test("the PDF's cell table states each cell's sample, failures and verdict as the lot views, and its runs as the run views", async () => {
    const mgr = await t.signIn('manager');
    const d: QualificationDetail = (await mgr.get(`/api/qualifications/${qual.id}`)).body;
    const res = await mgr
      .get(`/api/qualifications/${qual.id}/report.pdf`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    const flat = pdfText(res.body as Buffer).replace(/\s+/g, ' ');
    const verdictWord: Record<string, string> = { passed: 'Passed', failed: 'Failed', 'in-progress': 'In progress' };
    const stateWord: Record<string, string> = { passed: 'Passed', failed: 'Failed', 'under-stress': 'Under stress' };
    let compared = 0;
    for (const c of cellsOf(d, 'htrb')) {
      const view: LotDetail = (await mgr.get(`/api/analytics/lots/${c.lotId}`)).body;
      const p = view.plans.find((x) => x.kind === 'htrb')!;
      // "planned (c accept), booked, judged, failed" then "state / verdict", as the cell table prints them.
      const row = `${c.plannedSample} (c ${c.acceptNumber}), ${p.sample.booked}, ${p.sample.judged}, ${p.sample.failures} ${stateWord[c.state]} / ${verdictWord[p.verdict]}`;
      expect(flat).toContain(row);
      for (const r of c.runs) {
        const run = (await mgr.get(`/api/runs/${r.id}`)).body;
        expect(flat).toContain(`${run.code} (${run.rig.code}, ${run.state}, ${run.stressHours} h)`);
        compared++;
      }
    }
    expect(compared).toBe(3);
    // Drift charts per cell: each HTRB cell's judged run, this lot's devices.
    for (const run of ['R-QA', 'R-QB', 'R-QC'])
      expect(flat).toContain(`High-temperature reverse bias (HTRB): hFE change from time zero (run ${run})`);
  });

  test("the CSV's numbers per cell match the lot views (sample, failures, FIT, verdict)", async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/qualifications/${qual.id}/report.csv`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    const rows: string[][] = parse(res.text, { relax_column_count: true });
    const header = rows.findIndex((r) => r[0] === 'Group' && r[1] === 'Lot');
    expect(header).toBeGreaterThan(0);
    const col = (name: string) => rows[header].indexOf(name);
    const htrbRows = rows.slice(header + 1).filter((r) => r[0] === 'High-temperature reverse bias (HTRB)');
    expect(htrbRows.map((r) => r[1])).toEqual(['HG9801-A', 'HG9801-B', 'HG9801-C']);
    let compared = 0;
    for (const r of htrbRows) {
      const view: LotDetail = (await mgr.get(`/api/analytics/lots/${ids[r[1]]}`)).body;
      const p = view.plans.find((x) => x.kind === 'htrb')!;
      expect(Number(r[col('Booked')])).toBe(p.sample.booked);
      expect(Number(r[col('Judged')])).toBe(p.sample.judged);
      expect(Number(r[col('Failures')])).toBe(p.sample.failures);
      expect(r[col('Verdict')]).toBe(
        { passed: 'Passed', failed: 'Failed', 'in-progress': 'In progress' }[p.verdict as string] ?? p.verdict,
      );
      if (p.fit) {
        expect(Number(r[col('FIT 60 %')])).toBeCloseTo(p.fit.fit60, 4);
        expect(Number(r[col('FIT 90 %')])).toBeCloseTo(p.fit.fit90, 4);
        compared++;
      }
    }
    expect(compared).toBeGreaterThanOrEqual(2);
    expect(res.text).toMatch(/Waiver,Solderability,HG9801-A/);
    // Withdrawn records stay on the report with who withdrew them and why.
    const withdrawn = rows.filter((r) => r[0] === 'Withdrawn');
    expect(withdrawn.map((r) => r.slice(0, 4))).toEqual([
      ['Withdrawn', 'outside result', 'ESD, human body model', 'HG9801-A'],
      ['Withdrawn', 'waiver', 'Physical dimensions', 'HG9801-A'],
      ['Withdrawn', 'waiver', 'Solderability', 'HG9801-A'],
    ]);
    expect(withdrawn[2][4]).toMatch(/^Same lead frame/);
    expect(withdrawn[2].slice(5, 8)).toEqual([
      'Test engineer',
      'The customer did not accept the similarity argument; solderability is to be tested on this lot.',
      'Test engineer',
    ]);
    expect(withdrawn[0][4]).toBe('pass - Harrowgate ESD bench, tested 2026-11-02 10:00 UTC, document HPD-ESD-0412');
    expect(res.text).toMatch(/\r\nHG9801-A,R-QA,OV-97,qualification test oven,/);
  });
});

describe('the matrix fills as runs finish, and says when it can be done', () => {
  const waive = async (q: QualificationDetail, keep: string) => {
    const eng = await t.signIn('engineer');
    let d = q;
    for (const c of q.cells.filter((x) => x.groupKey !== keep))
      d = (
        await eng
          .post(`/api/qualifications/${q.id}/cells/${c.id}/waiver`)
          .send({ reason: 'Outside this test: only the one stress group is followed here.' })
      ).body;
    return d;
  };

  test('an under-stress cell projects its run to the end of its stress hours; the qualification finishes with its last open cell', async () => {
    const eng = await t.signIn('engineer');
    const created = await eng
      .post('/api/qualifications')
      .send({ name: 'HPD-Q100 group E only', templateKey: 'mil-prf-19500', deviceTypeIds: [ids.type], lotIds: [ids['HG9801-B']] });
    expect(created.status).toBe(201);
    const d = await waive(created.body, 'e-htrb');
    const cell = cellsOf(d, 'e-htrb')[0];
    expect(cell.state).toBe('under-stress');
    expect(cell.runs.map((r) => [r.code, r.state, r.stressHours])).toEqual([['R-QB', 'stressing', 560]]);
    // Hand computation (server/modules/runs/scheduling-data.ts projectedWindow): 1000 − 560 = 440 stress hours left, no
    // intermediate read point above 560 h (168, 500), no heat-up while stressing; the test app's clock runs a stress
    // hour per second (EMBERLOT_CLOCK_RATE, 1 h/s by default: msPerClockHFor), and the booked end (60 days ago + 1096 h) is long past.
    expect(t.ctx.services.runs.timing.msPerClockH).toBe(1000);
    const expected = Date.now() + 440 * 1000;
    expect(Math.abs(Date.parse(cell.projectedFinish!) - expected)).toBeLessThan(5_000);
    expect(cell.projectionNote).toBe('Scheduled window of its runs.');
    expect(d.projectedFinish).toBe(cell.projectedFinish);
    expect(d.left).toEqual(['Group E high-temperature reverse bias on lot HG9801-B: under stress.']);
  });

  test('a run finishing moves its cell from under stress to passed, with the lot verdict', async () => {
    const m = t.ctx.ds.manager;
    const eng = await t.signIn('engineer');
    const lotD = await addLot('HG9801-D', ids.type);
    // The last read point measured; the stress is complete and the run is still on the rig.
    const run = await history('R-QD', lotD, 'stressing', undefined, {
      startedAt: new Date(Date.now() - 50 * 86400_000),
      stressHours: 1000,
      measuredH: [0, 168, 500, 1000],
    });
    const created = await eng
      .post('/api/qualifications')
      .send({ name: 'HPD-Q100 lot D', templateKey: 'mil-prf-19500', deviceTypeIds: [ids.type], lotIds: [lotD.lot.id] });
    const q = await waive(created.body, 'e-htrb');
    const cellId = cellsOf(q, 'e-htrb')[0].id;
    // The group asks for 45; this lot's plan judged 20: the cell plans 20 so the pass can stand.
    const edited = await eng.patch(`/api/qualifications/${q.id}/cells/${cellId}`).send({ plannedSample: 20 });
    let cell: QualCellView = edited.body.cells.find((c: QualCellView) => c.id === cellId);
    expect(cell.state).toBe('under-stress');
    expect(edited.body.status).toBe('in-progress');

    // The engine's own transitions (run-engine.ts transitionRun, as the scheduler's cooling step calls it).
    const deps = { audit: t.ctx.audit, now: () => new Date() };
    const entity = await m.findOneByOrFail(RunEntity, { id: run.id });
    await m.transaction(async (tm) => {
      await transitionRun(tm, deps, entity, rig, 'cooling', {}, { actor: 'system', action: 'run.stress-complete' });
      await transitionRun(tm, deps, entity, rig, 'finished', { finishedAt: new Date() }, { actor: 'system', action: 'run.finish' });
    });
    const after: QualificationDetail = (await eng.get(`/api/qualifications/${q.id}`)).body;
    cell = after.cells.find((c) => c.id === cellId)!;
    const view: LotDetail = (await eng.get(`/api/analytics/lots/${lotD.lot.id}`)).body;
    const p = view.plans.find((x) => x.kind === 'htrb')!;
    expect(p.verdict).toBe('passed');
    expect(cell.runs.map((r) => r.state)).toEqual(['finished']);
    expect(cell.state).toBe('passed');
    expect(cell.verdict).toBe('passed');
    expect(cell.sample).toEqual({ booked: 20, judged: 20, failures: 0 });
    expect(cell.projectedFinish).toBeNull();
    expect(after.status).toBe('complete');
    expect(after.left).toEqual([]);
  });
});
