/**
 * Traceability (issue #22 item 3): a lot's wafer lot, assembly lot and die revision as fields of
 * their own (validated, audited; bad input changes nothing), and one device's whole history on one
 * page — its lot, every socket it sat in, the readings with drift against time zero, the trip, the
 * alarm on its socket, the disposition with its reason and every version of a corrected reading.
 */
import { randomUUID } from 'node:crypto';
import { AlarmEntity, AuditLogEntity, DeviceEntity, LotEntity, MeasurementEntity, RigEntity } from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestDeviceType, insertTestHtrbPlan, tableCounts } from '../support/db';

let t: TestApp;
let typeId: string;
let lotId: string;
const devices: Record<string, string> = {};

beforeAll(async () => {
  t = await createTestApp();
  await t.ctx.ds.transaction(async (m) => {
    const rig = await m.save(
      m.create(RigEntity, {
        code: 'OV-94',
        name: 'history oven',
        socketCount: 32,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-94',
        mqttSecretHash: 'x',
        credentialsIssuedAt: new Date(),
      }),
    );
    const type = await insertTestDeviceType(m, 'HPD-H100');
    typeId = type.id;
    const plan = await insertTestHtrbPlan(m, type.id, { name: 'HTRB history plan', chamberC: 150 });
    const lot = await m.save(
      m.create(LotEntity, {
        code: 'HG9601-T',
        deviceTypeId: type.id,
        quantity: 500,
        notes: '',
        waferLot: 'W40',
        assemblyLot: 'A9601-1',
        dieRevision: 'C',
      }),
    );
    lotId = lot.id;
    const ds = await m.save(
      Array.from({ length: 10 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `T${String(i + 1).padStart(4, '0')}` })),
    );
    for (const d of ds) devices[d.serial] = d.id;
    const run = await insertHistoryRun(m, {
      code: 'R-HG9601-T',
      plan,
      deviceType: type,
      rig,
      lots: [{ lot, devices: ds, drift: { hfeDriftPctPer1000h: -2, leakageGrowthPer1000h: 1.2 } }],
      state: 'finished',
      startedAt: new Date('2026-03-01T00:00:00Z'),
      stressHours: 1000,
      measuredH: [0, 168, 500, 1000],
      noise: 0,
      trips: [{ serial: 'T0004', atH: 310, disposition: 'trip-failure' }],
    });
    await m.save(
      m.create(AlarmEntity, {
        kind: 'runaway-trip',
        severity: 'critical',
        rigId: rig.id,
        runId: run.id,
        socketIndex: 3,
        title: 'Runaway on OV-94 socket 3',
        message: 'Junction rising on its own; the socket was tripped.',
        dedupeKey: `runaway-trip:${rig.id}:3`,
      }),
    );
  });
});
afterAll(async () => {
  await t.close();
});

describe('lot traceability fields', () => {
  it('a new lot carries them; the lot API returns them', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng
      .post('/api/lots')
      .send({ code: 'HG9602-N', deviceTypeId: typeId, quantity: 100, waferLot: ' W41 ', assemblyLot: 'A9602-7', dieRevision: 'D' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ waferLot: 'W41', assemblyLot: 'A9602-7', dieRevision: 'D' });
    const got = await (await t.signIn('operator')).get(`/api/lots/${res.body.id}`);
    expect(got.body).toMatchObject({ waferLot: 'W41', assemblyLot: 'A9602-7', dieRevision: 'D' });
    // Not given: empty, not missing.
    const bare = await eng.post('/api/lots').send({ code: 'HG9603-N', deviceTypeId: typeId, quantity: 100 });
    expect(bare.body).toMatchObject({ waferLot: '', assemblyLot: '', dieRevision: '' });
  });

  it('refuses bad values field by field and stores nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng
      .post('/api/lots')
      .send({ code: 'HG9604-X', deviceTypeId: typeId, quantity: 100, waferLot: 'W\u00e841', assemblyLot: 'A'.repeat(41), dieRevision: 7 });
    expect(res.status).toBe(400);
    expect(res.body.error.fields.waferLot).toEqual(['Wafer lot: letters, digits and ordinary punctuation only']);
    expect(res.body.error.fields.assemblyLot).toEqual(['Assembly lot: at most 40 characters']);
    expect(res.body.error.fields.dieRevision).toHaveLength(1);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('an engineer changes them (audited with before and after); bad input or a wrong role changes nothing', async () => {
    const eng = await t.signIn('engineer');
    const ok = await eng.patch(`/api/lots/${lotId}`).send({ waferLot: 'W40A', dieRevision: 'C2' });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ waferLot: 'W40A', assemblyLot: 'A9601-1', dieRevision: 'C2' });
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'lot.update', entityId: lotId });
    expect(audit.details).toEqual({
      code: 'HG9601-T',
      changes: { waferLot: { from: 'W40', to: 'W40A' }, dieRevision: { from: 'C', to: 'C2' } },
    });

    const before = await tableCounts(t.ctx.ds);
    const lotBefore = await t.ctx.ds.getRepository(LotEntity).findOneByOrFail({ id: lotId });
    const bad = await eng.patch(`/api/lots/${lotId}`).send({ waferLot: 'W\u0001' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.waferLot).toEqual(['Wafer lot: letters, digits and ordinary punctuation only']);
    const unknown = await eng.patch(`/api/lots/${lotId}`).send({ code: 'HG0000-Z' });
    expect(unknown.status).toBe(400);
    const empty = await eng.patch(`/api/lots/${lotId}`).send({});
    expect(empty.status).toBe(400);
    const op = await (await t.signIn('operator')).patch(`/api/lots/${lotId}`).send({ waferLot: 'W99' });
    expect(op.status).toBe(403);
    const missing = await eng.patch(`/api/lots/${randomUUID()}`).send({ waferLot: 'W99' });
    expect(missing.status).toBe(404);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect(await t.ctx.ds.getRepository(LotEntity).findOneByOrFail({ id: lotId })).toEqual(lotBefore);
  });
});

describe('device history', () => {
  it('shows the lot, the socket from start to trip, drift per read point, the trip, the alarm and the disposition with its reason', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/devices/${devices.T0004}/history`);
    expect(res.status).toBe(200);
    const h = res.body;
    expect(h.serial).toBe('T0004');
    expect(h.lot).toMatchObject({ code: 'HG9601-T', partNumber: 'HPD-H100', waferLot: 'W40A', assemblyLot: 'A9601-1' });
    expect(h.sockets).toHaveLength(1);
    const s = h.sockets[0];
    expect(s).toMatchObject({
      runCode: 'R-HG9601-T',
      rigCode: 'OV-94',
      socketIndex: 3,
      planName: 'HTRB history plan',
      from: '2026-03-01T00:00:00.000Z',
      // The trip ends the stint: 310 stress hours after the start (insertHistoryRun's clock).
      to: new Date(Date.parse('2026-03-01T00:00:00Z') + 310 * 3600_000).toISOString(),
      creditedHours: 310,
      tripped: true,
      tripReason: 'Runaway: junction rising on its own (protection trip)',
    });
    // Readings until the trip, drift against time zero: −2 % per 1000 h (noise 0) → −0.336 % at 168 h.
    expect(s.readPoints.map((r: { readPointH: number }) => r.readPointH)).toEqual([0, 168]);
    const at168 = s.readPoints[1].parameters.find((p: { parameter: string }) => p.parameter === 'hfe');
    expect(at168.changePct).toBeCloseTo(-2 * (168 / 1000), 2);
    expect(h.alarms).toEqual([
      expect.objectContaining({ runCode: 'R-HG9601-T', kind: 'runaway-trip', title: 'Runaway on OV-94 socket 3' }),
    ]);
    expect(h.dispositions).toEqual([
      expect.objectContaining({
        runCode: 'R-HG9601-T',
        kind: 'trip-failure',
        label: 'Trip counts as a failure',
        readPointH: 500,
        reason: 'Socket 3 tripped at 310 h on thermal runaway; counted as a failure.',
      }),
    ]);
    // A device that did not trip: the whole run, no alarm, no disposition.
    const calm = (await mgr.get(`/api/devices/${devices.T0001}/history`)).body;
    expect(calm.sockets[0]).toMatchObject({ socketIndex: 0, tripped: false, creditedHours: 1000, status: 'pass' });
    expect(calm.sockets[0].readPoints).toHaveLength(4);
    expect(calm.alarms).toEqual([]);
    expect(calm.dispositions).toEqual([]);
  });

  it('keeps every version of a corrected reading', async () => {
    const [m] = await t.ctx.ds.query(`SELECT id, hfe FROM measurements WHERE device_id = $1 AND read_point_h = 1000`, [devices.T0002]);
    await t.ctx.ds.getRepository(MeasurementEntity).update({ id: m.id }, { hfe: m.hfe * 0.99, changeReason: 'Re-measured: probe contact' });
    const h = (await (await t.signIn('operator')).get(`/api/devices/${devices.T0002}/history`)).body;
    const v = h.sockets[0].versions.filter((x: { readPointH: number }) => x.readPointH === 1000);
    expect(v.map((x: { version: number; current: boolean; reason: string | null }) => [x.version, x.current, x.reason])).toEqual([
      [1, false, null],
      [2, true, 'Re-measured: probe contact'],
    ]);
    expect(v[1].hfe).toBeCloseTo(v[0].hfe * 0.99, 9);
  });

  it('a device that does not exist is not found; a bad id is refused; signed-out is refused', async () => {
    const op = await t.signIn('operator');
    expect((await op.get(`/api/devices/${randomUUID()}/history`)).status).toBe(404);
    const bad = await op.get('/api/devices/not-an-id/history');
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.deviceId).toEqual(['Not a valid device id']);
    const { default: request } = await import('supertest');
    expect((await request(t.app).get(`/api/devices/${devices.T0001}/history`)).status).toBe(401);
  });
});

describe('migration of lots that kept the wafer lot in their notes', () => {
  it('moves "…, wafer lot W88" into the field and leaves other notes alone', async () => {
    const { LotTraceability1822000000000: Migration } = await import('../../server/db/migrations/1822000000000-LotTraceability');
    const qr = t.ctx.ds.createQueryRunner();
    try {
      await new Migration().down(qr);
      await qr.query(
        `INSERT INTO lots (code, device_type_id, quantity, notes) VALUES ('HG9690-M', $1, 10, 'Line 2, wafer lot W88'), ('HG9691-M', $1, 10, 'wafer lot W91'), ('HG9692-M', $1, 10, 'Wafer lot to follow')`,
        [typeId],
      );
      await new Migration().up(qr);
      const rows = await qr.query(`SELECT code, notes, wafer_lot FROM lots WHERE code LIKE 'HG969%-M' ORDER BY code`);
      expect(rows).toEqual([
        { code: 'HG9690-M', notes: 'Line 2', wafer_lot: 'W88' },
        { code: 'HG9691-M', notes: '', wafer_lot: 'W91' },
        { code: 'HG9692-M', notes: 'Wafer lot to follow', wafer_lot: '' },
      ]);
    } finally {
      await qr.release();
    }
  });
});
