/**
 * Chamber time through the API (issue #22 item 2): a chamber registered as a rig of kind 'chamber'
 * (capacity in devices), a temperature-cycling plan from its template (read points in cycles), a
 * booking on the chamber with the burn-in oven refused in words, a booking beyond the chamber's
 * capacity refused with a clear error and nothing changed, and devices loaded by serial list.
 */
import { RigEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { tcPeriodMin } from '../../shared/chamber/profile';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
const ids: Record<string, string> = {};
const SHORT = { reason: 'Test fixture: a short sample on purpose' };
const serials = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${String(i + 1).padStart(4, '0')}`);

beforeAll(async () => {
  t = await createTestApp();
  const admin = await t.signIn('admin');
  const chamber = await admin.post('/api/rigs').send({
    code: 'TC-01',
    name: 'Cycling chamber 1',
    kind: 'chamber',
    socketCount: 10,
    maxTempC: 180,
    minTempC: -70,
    maxVoltageV: 0,
  });
  expect(chamber.status).toBe(201);
  ids['TC-01'] = chamber.body.rig?.id ?? chamber.body.id;
  const oven = await admin.post('/api/rigs').send({ code: 'OV-01', name: 'Oven 1', socketCount: 64, maxTempC: 200, maxVoltageV: 800 });
  expect(oven.status).toBe(201);
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140'));
  expect(type.status).toBe(201);
  ids.type = type.body.id;
  const lot = await eng.post('/api/lots').send({ code: 'HG2611-A', deviceTypeId: ids.type, quantity: 2400, serials: serials('A', 12) });
  expect(lot.status).toBe(201);
  ids.lot = lot.body.id;
});
afterAll(async () => {
  await t.close();
});

describe('a chamber and a temperature-cycling plan', () => {
  it('registers a chamber with its capacity in devices and its cold limit', async () => {
    const rig = await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: 'TC-01' });
    expect([rig.kind, rig.socketCount, rig.minTempC]).toEqual(['chamber', 10, -70]);
    const admin = await t.signIn('admin');
    const bad = await admin
      .post('/api/rigs')
      .send({ code: 'OV-09', name: 'x', socketCount: 8, maxTempC: 200, maxVoltageV: 800, minTempC: -40 });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body)).toContain('Only a chamber has a cold limit');
  });

  it('saves the tc template as a plan: read points 0/250/500/1000 cycles as hours of the profile, Tstg checked', async () => {
    const eng = await t.signIn('engineer');
    const tpl = await eng.get(`/api/plans/templates?deviceTypeId=${ids.type}`);
    expect(tpl.status).toBe(200);
    const tc = tpl.body.items.find((x: { kind: string }) => x.kind === 'tc');
    const res = await eng.post('/api/plans').send({ ...tc.plan, sampleSize: 8 });
    expect(res.status).toBe(201);
    const periodH = tcPeriodMin({ lowC: -55, highC: 125, dwellMin: 10, rampKPerMin: 10 }) / 60; // 56 min (JESD22-A104 condition B, from memory)
    expect(res.body.readPointsH.map((h: number) => Math.round(h / periodH))).toEqual([0, 250, 500, 1000]);
    expect(res.body.thermalCycle).toEqual({ lowC: -55, highC: 125, dwellMin: 10, rampKPerMin: 10, cycles: 1000 });
    expect(res.body.checkStatus).not.toBe('block');
    ids.plan = res.body.id;
    const detail = await eng.get(`/api/plans/${ids.plan}`);
    const f = detail.body.checkResult.findings.find((x: { code: string }) => x.code === 'chamber-vs-tstg-min');
    expect(f.numbers.coldC.value).toBe(-65);
    expect(f.numbers.tstgMinC.value).toBe(-65);
  });
});

describe('booking chamber time', () => {
  it('proposes the chamber and refuses the burn-in oven in words', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs/proposals').send({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 8 });
    expect(res.status).toBe(200);
    expect(res.body.options.map((o: { rigCode: string }) => o.rigCode)).toEqual(['TC-01']);
    const oven = res.body.refusals.find((r: { rigCode: string }) => r.rigCode === 'OV-01');
    expect(oven.reasons).toContain('Oven OV-01 is a burn-in oven with biased sockets; a temperature cycling plan runs in a chamber.');
  });

  it('refuses more devices than the chamber holds with a clear error, and changes nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 12, deviation: SHORT, rigId: ids['TC-01'] });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe('Chamber TC-01 holds 10 devices; the plan needs 12.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('books chamber time and loads the devices by serial list; read points count in cycles', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 8, deviation: SHORT, rigId: ids['TC-01'] });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ code: 'TC-2611-A', state: 'booked', rig: { code: 'TC-01' }, cycles: null });
    expect(res.body.chamberCycles).toMatchObject({ done: 0, target: 1000, nextReadPointCycles: 250, lowC: -55, highC: 125, periodMin: 56 });
    const op = await t.signIn('operator');
    const loaded = await op.put(`/api/runs/${res.body.id}/sockets`).send({ rowVersion: res.body.rowVersion, serials: serials('A', 8) });
    expect(loaded.status).toBe(200);
    expect(loaded.body.stored).toBe(true);
    expect(loaded.body.run.sockets.map((s: { socket: number; serial: string }) => [s.socket, s.serial])).toEqual(
      serials('A', 8).map((x, i) => [i, x]),
    );
    expect(loaded.body.run.chamber).toEqual({ latest: null, profile: [] });
    const permit = await eng.get(`/api/runs/${res.body.id}/permit`);
    const reports = permit.body.checks.find((c: { key: string }) => c.key === 'sockets');
    expect(reports).toMatchObject({ label: 'Chamber reports', ok: false });
    expect(permit.body.confirm.biasText).toBe('no bias (an unbiased chamber stress)');
  });

  it('a serial list on a burn-in oven is refused', async () => {
    const eng = await t.signIn('engineer');
    const htrb = await eng.post('/api/plans').send({
      name: 'HTRB 145 °C',
      kind: 'htrb',
      deviceTypeId: ids.type,
      chamberC: 145,
      bias: { vcbV: 112 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 2,
      acceptNumber: 0,
      criteria: {},
    });
    expect(htrb.status).toBe(201);
    const oven = await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: 'OV-01' });
    const run = await eng.post('/api/runs').send({ planId: htrb.body.id, lotIds: [ids.lot], sampleSize: 2, rigId: oven.id });
    expect(run.status).toBe(201);
    const op = await t.signIn('operator');
    const res = await op.put(`/api/runs/${run.body.id}/sockets`).send({ rowVersion: run.body.rowVersion, serials: ['A0011', 'A0012'] });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe('OV-01 is a burn-in oven: place each device in a socket (a serial list is for chambers).');
  });
});
