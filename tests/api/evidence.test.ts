/**
 * The evidence a lot verdict stands on (issue #19, data half), through the real API and PostgreSQL:
 * a sample must hold the plan's size (or carry a recorded deviation), may be split across rigs and
 * booked together; dead devices (open, short, no reading) are stored and count as failures;
 * dispositions account for devices without readings; a read point is complete only when every
 * device is accounted for; readings measured under other conditions than time zero are flagged
 * until an engineer confirms them. Every refused request changes nothing.
 */
import {
  AuditLogEntity,
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  MeasurementEntity,
  RigEntity,
  RunEntity,
  RunSocketEntity,
  SampleEntity,
} from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestDevices, insertTestHtrbPlan, insertTestRig, tableCounts } from '../support/db';
import { htrbPlanBody, postDemoType, postLot, postPlan, serials } from '../support/lab';

let t: TestApp;
/** Row counts once queued mail (sent after a response, e.g. a read-point notice) has landed in mail_log. */
const settledCounts = async () => {
  await t.ctx.services.mail.idle();
  return tableCounts(t.ctx.ds);
};
const ids: Record<string, string> = {};

/** An oven rated 800 V with `socketCount` sockets. */
const addRig = (code: string, socketCount: number) =>
  insertTestRig(t.ctx.ds, code, { sockets: socketCount, maxVoltageV: 800, name: `Oven ${code}` });

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  ids.type = await postDemoType(eng);
  ids.lot = await postLot(eng, { code: 'HG2611-A', deviceTypeId: ids.type, quantity: 2400, serials: serials('A', 160) });
  // [pub: AEC-Q101 test table] HTRB: 77 devices per lot, accept on 0.
  ids.plan = await postPlan(eng, htrbPlanBody(ids.type, { sampleSize: 77, acceptNumber: 0 }));
  ids['OV-01'] = await addRig('OV-01', 64);
  ids['OV-02'] = await addRig('OV-02', 64);
  ids['OV-04'] = await addRig('OV-04', 4);
});
afterAll(async () => {
  await t.close();
});

describe('sample size against the plan', () => {
  it('booking 64 devices against a plan of 77 without a deviation is refused with the numbers; nothing is stored', async () => {
    const eng = await t.signIn('engineer');
    const before = await settledCounts();
    const res = await eng.post('/api/runs').send({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 64, rigId: ids['OV-01'] });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      'The plan asks for 77 devices; this booking holds 64 (13 short). Book the rest on another rig in the same booking (a split sample), or record a deviation with a reason of at least 10 characters.',
    );
    expect(await settledCounts()).toEqual(before);
  });

  it('a deviation that is too short is refused by the schema', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 64, rigId: ids['OV-01'], deviation: { reason: 'short' } });
    expect(res.status).toBe(400);
    expect(res.body.error.fields['deviation.reason']).toEqual(['Write at least 10 characters on why a smaller sample may stand']);
  });

  it('77 devices split over two 64-socket rigs are booked together as one sample', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs/samples').send({
      planId: ids.plan,
      lotIds: [ids.lot],
      parts: [
        { rigId: ids['OV-01'], sampleSize: 64 },
        { rigId: ids['OV-02'], sampleSize: 13 },
      ],
    });
    expect(res.status).toBe(201);
    expect(res.body.sample).toMatchObject({ plannedSize: 77, bookedSize: 77, deviation: null });
    expect(res.body.sample.runs.map((r: { rigCode: string; sampleSize: number }) => [r.rigCode, r.sampleSize]).sort()).toEqual([
      ['OV-01', 64],
      ['OV-02', 13],
    ]);
    expect(res.body.runs).toHaveLength(2);
    for (const r of res.body.runs) {
      expect(r.sample).toMatchObject({ id: res.body.sample.id, plannedSize: 77, bookedSize: 77, deviation: null });
      expect(r.sample.runCodes).toHaveLength(2);
    }
    const audit = await t.ctx.ds
      .getRepository(AuditLogEntity)
      .findOneByOrFail({ entity: 'sample', entityId: res.body.sample.id, action: 'sample.book' });
    expect(audit.details).toMatchObject({ plannedSize: 77, bookedSize: 77 });
    ids.splitSample = res.body.sample.id;
  });

  it('a split whose second part does not fit its rig books nothing at all', async () => {
    const eng = await t.signIn('engineer');
    const before = await settledCounts();
    const res = await eng.post('/api/runs/samples').send({
      planId: ids.plan,
      lotIds: [ids.lot],
      parts: [
        { rigId: ids['OV-01'], sampleSize: 64 },
        { rigId: ids['OV-04'], sampleSize: 13 },
      ],
    });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/OV-04/);
    expect(await settledCounts()).toEqual(before);
  });

  it('the same rig twice in one sample is refused by the schema', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs/samples').send({
      planId: ids.plan,
      lotIds: [ids.lot],
      parts: [
        { rigId: ids['OV-01'], sampleSize: 40 },
        { rigId: ids['OV-01'], sampleSize: 37 },
      ],
    });
    expect(res.status).toBe(400);
    expect(res.body.error.fields['parts.1.rigId']).toEqual(['Each part of a sample goes to a different rig']);
  });

  it('a smaller sample with a deviation is booked; the reason, person and time are stored and audited', async () => {
    const eng = await t.signIn('engineer');
    const reason = 'Only 64 devices of this lot survived assembly; customer agreed';
    const res = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids.lot], sampleSize: 64, rigId: ids['OV-02'], deviation: { reason } });
    expect(res.status).toBe(201);
    expect(res.body.sample).toMatchObject({ plannedSize: 77, bookedSize: 64, deviation: reason });
    const s = await t.ctx.ds.getRepository(SampleEntity).findOneByOrFail({ id: res.body.sample.id });
    expect(s.deviationReason).toBe(reason);
    expect(s.deviationById).not.toBeNull();
    expect(s.deviationAt).not.toBeNull();
    const audit = await t.ctx.ds
      .getRepository(AuditLogEntity)
      .findOneByOrFail({ entity: 'sample', entityId: s.id, action: 'sample.deviation' });
    expect(audit.reason).toBe(reason);
    expect(audit.details).toMatchObject({ plannedSize: 77, bookedSize: 64 });
    const view = await (await t.signIn('manager')).get(`/api/evidence/samples/${s.id}`);
    expect(view.status).toBe(200);
    expect(view.body.deviation).toMatchObject({ reason, byName: expect.any(String) });
  });
});

// ---------------------------------------------------------------------------------------------
// Readings, dispositions and coverage on a run that has reached 168 h

const HEADER = 'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_a,icbo_vcb_v,vcesat_v,temp_c';
const good = (serial: string, temp = 25, ic = 0.15) => `${serial},118,${ic},5,2.1e-8,112,0.22,${temp}`;

describe('readings, dispositions and coverage', () => {
  let runId: string;
  let sampleId: string;
  let devices: DeviceEntity[];

  beforeAll(async () => {
    await t.ctx.ds.transaction(async (m) => {
      const type = await m.findOneByOrFail(DeviceTypeEntity, { id: ids.type });
      const plan = await insertTestHtrbPlan(m, type.id, { name: 'HTRB 145 °C, five devices', sampleSize: 5 });
      const lot = await m.save(m.create(LotEntity, { code: 'HG2612-C', deviceTypeId: type.id, quantity: 100 }));
      devices = await insertTestDevices(m, lot.id, serials('C', 5));
      const rig = await m.findOneByOrFail(RigEntity, { id: ids['OV-04'] });
      // Time zero measured (exact values, no noise); stressed to 200 h; socket of C0005 tripped at 50 h.
      const run = await insertHistoryRun(m, {
        code: 'HTRB-2612-C',
        plan,
        deviceType: type,
        rig,
        lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
        state: 'stressing',
        startedAt: new Date('2026-01-01T00:00:00Z'),
        stressHours: 200,
        measuredH: [0],
        noise: 0,
      });
      await m.update(
        RunSocketEntity,
        { runId: run.id, deviceId: devices[4].id },
        { tripped: true, trippedAt: new Date('2026-01-03T02:00:00Z'), accruedHours: 50 },
      );
      runId = run.id;
      sampleId = run.sampleId!;
    });
  });

  // A file that replaces stored readings needs a reason (shared/domain/records.ts); a first entry ignores it.
  const upload = async (csv: string, hours = 168) =>
    (await t.signIn('operator'))
      .post(`/api/measurements/runs/${runId}/read-points/${hours}/upload`)
      .field('reason', 'Re-measured at the read point')
      .attach('file', Buffer.from(csv), 'rp168.csv');
  const coverage = async () => (await (await t.signIn('manager')).get(`/api/evidence/runs/${runId}/coverage`)).body;

  it('time zero alone: 168 h is not complete and names every device still missing', async () => {
    const c = await coverage();
    const at = (h: number) => c.readPoints.find((r: { readPointH: number }) => r.readPointH === h);
    expect(at(0)).toMatchObject({ expected: 5, measured: 5, complete: true, missing: [] });
    expect(at(168)).toMatchObject({ expected: 5, measured: 0, complete: false, reached: true });
    expect(at(168).missing.map((x: { serial: string }) => x.serial)).toEqual(['C0001', 'C0002', 'C0003', 'C0004', 'C0005']);
    expect(at(500).reached).toBe(false);
  });

  it('a CSV with an open device stores it as a failure at 168 h; a truly bad row is still refused with its reason', async () => {
    const csv = [
      HEADER,
      good('C0001'),
      'C0002,OPEN,,,,,,25',
      good('C0003').replace('2.1e-8', '-1e-9'),
      'C0004,118,0.15,5,2.1e-8,112,0.22,25',
    ].join('\n');
    const res = await upload(csv);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ inserted: 3, rejected: 1 });
    const bad = res.body.rows.find((r: { serial: string }) => r.serial === 'C0003');
    expect(bad).toMatchObject({ outcome: 'rejected', row: 4 });
    expect(bad.reasons[0]).toMatch(/Negative leakage/);
    const open = res.body.rows.find((r: { serial: string }) => r.serial === 'C0002');
    expect(open).toMatchObject({ outcome: 'insert', values: { result: 'open', hfe: null, icboA: null } });
    const stored = await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: devices[1].id, readPointH: 168 });
    expect(stored).toMatchObject({ result: 'open', hfe: null });
    const sock = await t.ctx.ds.getRepository(RunSocketEntity).findOneByOrFail({ runId, deviceId: devices[1].id });
    expect(sock.failedAtH).toBe(168);
    const readings = await (await t.signIn('manager')).get(`/api/measurements/runs/${runId}/read-points/168`);
    expect(readings.body.items.find((r: { serial: string }) => r.serial === 'C0002')).toMatchObject({ result: 'open', hfe: null });
  });

  it('a result column also marks a dead device (SHORT); two different words in one row are refused', async () => {
    const res = await upload([`${HEADER},result`, 'C0003,,,,,,,25,SHORT', 'C0004,OPEN,0.15,5,SHORT,112,0.22,25,'].join('\n'));
    expect(res.status).toBe(201);
    expect(res.body.rows[0]).toMatchObject({ serial: 'C0003', outcome: 'insert', values: { result: 'short' } });
    expect(res.body.rows[1]).toMatchObject({
      serial: 'C0004',
      outcome: 'rejected',
      reasons: ['The row says both open and short; give one result.'],
    });
  });

  it('a dead device is entered by hand without values; a live one without values is refused', async () => {
    const op = await t.signIn('operator');
    const missing = await op
      .post(`/api/measurements/runs/${runId}/read-points/168/measurements`)
      .send([{ serial: 'C0004', result: 'measured', hfe: 118 }]);
    expect(missing.status).toBe(400);
    expect(missing.body.error.fields['0.hfeIcA']).toEqual(['Enter a value, or choose open, short or no reading for a dead device']);
    const res = await op
      .post(`/api/measurements/runs/${runId}/read-points/168/measurements`)
      .send([{ serial: 'C0004', result: 'no-reading', reason: 'Re-test: the tester could not bias it' }]);
    expect(res.status).toBe(201);
    expect(
      await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: devices[3].id, readPointH: 168 }),
    ).toMatchObject({ result: 'no-reading', icboA: null });
  });

  it('a trip disposition on a device that did not trip is refused; nothing is stored', async () => {
    const before = await settledCounts();
    const res = await (
      await t.signIn('engineer')
    )
      .post(`/api/evidence/runs/${runId}/dispositions`)
      .send({ serial: 'C0001', readPointH: 168, kind: 'trip-failure', reason: 'Thought it tripped' });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe('Device C0001 (socket 0) did not trip; "Trip counts as a failure" is only for a tripped device.');
    expect(await settledCounts()).toEqual(before);
  });

  it('the tripped device counted as a failure: recorded, audited, failed at 168 h; the read point is then complete', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng
      .post(`/api/evidence/runs/${runId}/dispositions`)
      .send({ serial: 'C0005', readPointH: 168, kind: 'trip-failure', reason: 'Runaway trip at 50 h; junction shorted' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      serial: 'C0005',
      kind: 'trip-failure',
      kindLabel: 'Trip counts as a failure',
      readPointH: 168,
      byName: expect.any(String),
    });
    const audit = await t.ctx.ds
      .getRepository(AuditLogEntity)
      .findOneByOrFail({ entity: 'run', entityId: runId, action: 'device.disposition' });
    expect(audit.details).toMatchObject({ serial: 'C0005', kind: 'trip-failure', readPointH: 168 });
    expect((await t.ctx.ds.getRepository(RunSocketEntity).findOneByOrFail({ runId, deviceId: devices[4].id })).failedAtH).toBe(168);
    const c = await coverage();
    expect(c.readPoints.find((r: { readPointH: number }) => r.readPointH === 168)).toMatchObject({
      expected: 5,
      measured: 1,
      catastrophic: 3,
      disposed: 1,
      missing: [],
      complete: true,
    });
  });

  it('a second disposition for the same device is refused (409) and changes nothing', async () => {
    const before = await settledCounts();
    const res = await (
      await t.signIn('operator')
    )
      .post(`/api/evidence/runs/${runId}/dispositions`)
      .send({ serial: 'C0005', readPointH: 168, kind: 'lost', reason: 'Dropped it' });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(
      /^Device C0005 already has a disposition in run HTRB-2612-C: Trip counts as a failure from 168 h/,
    );
    expect(await settledCounts()).toEqual(before);
  });

  it('a disposition recorded by mistake is withdrawn by an engineer (audited with what it said); an operator may not', async () => {
    const op = await t.signIn('operator');
    const made = await op
      .post(`/api/evidence/runs/${runId}/dispositions`)
      .send({ serial: 'C0001', readPointH: 500, kind: 'lost', reason: 'Wrong serial typed' });
    expect(made.status).toBe(201);
    const before = await settledCounts();
    expect((await op.post(`/api/evidence/dispositions/${made.body.id}/withdraw`).send({ reason: 'Typed the wrong serial' })).status).toBe(
      403,
    );
    expect(await settledCounts()).toEqual(before);
    const res = await (
      await t.signIn('engineer')
    )
      .post(`/api/evidence/dispositions/${made.body.id}/withdraw`)
      .send({ reason: 'Typed the wrong serial' });
    expect(res.status).toBe(200);
    expect(res.body.dispositions.map((d: { serial: string }) => d.serial)).toEqual(['C0005']);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ entityId: runId, action: 'device.disposition-withdrawn' });
    expect(audit).toMatchObject({
      reason: 'Typed the wrong serial',
      details: { kind: 'lost', readPointH: 500, recordedReason: 'Wrong serial typed' },
    });
    const again = await (
      await t.signIn('engineer')
    )
      .post(`/api/evidence/dispositions/${made.body.id}/withdraw`)
      .send({ reason: 'Typed the wrong serial' });
    expect(again.status).toBe(404);
  });

  it('the sample evidence lists each device with its hours, trip and disposition, and the coverage', async () => {
    const res = await (await t.signIn('manager')).get(`/api/evidence/samples/${sampleId}`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ plannedSize: 5, bookedSize: 5, loadedSize: 5, readPointsH: [0, 168, 500, 1000] });
    const c5 = res.body.devices.find((d: { serial: string }) => d.serial === 'C0005');
    expect(c5).toMatchObject({ creditedHours: 50, tripped: true, failedAtH: 168, disposition: { kind: 'trip-failure' } });
    expect(res.body.devices.find((d: { serial: string }) => d.serial === 'C0001')).toMatchObject({
      creditedHours: 200,
      tripped: false,
      disposition: null,
    });
  });

  it('a reading measured at 35 °C against time zero at 25 °C is flagged; an operator may not confirm it, an engineer may (audited)', async () => {
    const res = await upload([HEADER, good('C0001', 35)].join('\n'));
    expect(res.status).toBe(201);
    expect(res.body.rows[0].conditionsFlag).toBe('Measured at 35 °C; time zero at 25 °C (allowed ± 3 °C).');
    const x = await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: devices[0].id, readPointH: 168 });
    expect(x.conditionsFlag).toBe('Measured at 35 °C; time zero at 25 °C (allowed ± 3 °C).');
    expect((await coverage()).readPoints.find((r: { readPointH: number }) => r.readPointH === 168).unconfirmed).toBe(1);
    const before = await settledCounts();
    const op = await (await t.signIn('operator')).post(`/api/evidence/measurements/${x.id}/confirm`).send({ reason: 'Tester warm' });
    expect(op.status).toBe(403);
    expect(await settledCounts()).toEqual(before);
    const eng = await t.signIn('engineer');
    const ok = await eng
      .post(`/api/evidence/measurements/${x.id}/confirm`)
      .send({ reason: 'hFE referred to 25 °C by the gain law; ICBO within limits' });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({
      conditionsFlag: expect.any(String),
      confirmedAt: expect.any(String),
      confirmedByName: expect.any(String),
    });
    expect(await t.ctx.ds.getRepository(AuditLogEntity).countBy({ entityId: runId, action: 'measurement.confirm' })).toBe(1);
    const again = await eng.post(`/api/evidence/measurements/${x.id}/confirm`).send({ reason: 'Second time' });
    expect(again.status).toBe(409);
  });

  it('a test current 10 % off time zero is flagged too; re-measured at the right conditions the flag and its confirmation go', async () => {
    const res = await upload([HEADER, good('C0001', 25, 0.165)].join('\n'));
    expect(res.body.rows[0].conditionsFlag).toBe('IC for hFE 0.165 A; time zero 0.15 A (+10 %, allowed ± 2 %).');
    const fixed = await upload([HEADER, good('C0001', 25.5, 0.15)].join('\n'));
    expect(fixed.status).toBe(201);
    const x = await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: devices[0].id, readPointH: 168 });
    expect(x).toMatchObject({ conditionsFlag: null, confirmedAt: null });
  });

  it('a reading that is not flagged cannot be confirmed', async () => {
    const x = await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: devices[0].id, readPointH: 168 });
    const res = await (await t.signIn('engineer')).post(`/api/evidence/measurements/${x.id}/confirm`).send({ reason: 'Just in case' });
    expect(res.status).toBe(422);
  });

  it('the split sample booked above shows both runs and no device yet (nothing loaded)', async () => {
    const res = await (await t.signIn('engineer')).get(`/api/evidence/samples/${ids.splitSample}`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ plannedSize: 77, bookedSize: 77, loadedSize: 0 });
    expect(res.body.runs).toHaveLength(2);
    expect(await t.ctx.ds.getRepository(RunEntity).countBy({ sampleId: ids.splitSample })).toBe(2);
  });
});
