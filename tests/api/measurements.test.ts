import type { EntityManager } from 'typeorm';
import {
  AuditLogEntity,
  DeviceEntity,
  LotEntity,
  MeasurementEntity,
  MeasurementUploadEntity,
  RigEntity,
  RunEntity,
  RunSocketEntity,
} from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestDeviceType, insertTestHtrbPlan, tableCounts } from '../support/db';

let t: TestApp;
let runId: string;
let otherRunId: string;
const BIAS_OFF = new Date('2026-02-10T08:00:00Z');

const makeType = insertTestDeviceType;

async function makeRig(m: EntityManager, code: string) {
  return m.save(
    m.create(RigEntity, {
      code,
      name: code,
      socketCount: 64,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: `rig-${code.toLowerCase()}`,
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
    }),
  );
}

beforeAll(async () => {
  t = await createTestApp();
  await t.ctx.ds.transaction(async (m) => {
    const type = await makeType(m, 'HPD-T100');
    const plan = await insertTestHtrbPlan(m, type.id);
    const rig = await makeRig(m, 'OV-91');
    const lot = await m.save(m.create(LotEntity, { code: 'HG9901-A', deviceTypeId: type.id, quantity: 100 }));
    const other = await m.save(m.create(LotEntity, { code: 'HG9901-B', deviceTypeId: type.id, quantity: 100 }));
    const devices = await m.save(
      Array.from({ length: 12 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `A${String(i + 1).padStart(3, '0')}` })),
    );
    const otherDevices = await m.save(
      Array.from({ length: 3 }, (_, i) => m.create(DeviceEntity, { lotId: other.id, serial: `B${String(i + 1).padStart(3, '0')}` })),
    );
    // Ten devices on the run; A011 and A012 are registered but not on it.
    const run = await insertHistoryRun(m, {
      code: 'HTRB-T-01',
      plan,
      deviceType: type,
      rig,
      lots: [{ lot, devices: devices.slice(0, 10), drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
      state: 'stressing',
      startedAt: new Date('2026-01-01T00:00:00Z'),
      stressHours: 600,
      measuredH: [],
      noise: 0,
    });
    await m.update(RunEntity, { id: run.id }, { biasRemovedAt: BIAS_OFF });
    runId = run.id;
    const run2 = await insertHistoryRun(m, {
      code: 'HTRB-T-02',
      plan,
      deviceType: type,
      rig: null,
      lots: [{ lot: other, devices: otherDevices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
      state: 'stressing',
      startedAt: new Date('2026-01-01T00:00:00Z'),
      stressHours: 100,
      measuredH: [],
      noise: 0,
    });
    otherRunId = run2.id;
  });
});
afterAll(async () => {
  await t.close();
});

const HEADER = 'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_a,icbo_vcb_v,vcesat_v,temp_c,measured_at';
const line = (serial: string, hfe: number | string, icbo: number | string = '20e-9', at = '2026-01-01T02:00:00Z', temp = 25) =>
  `${serial},${hfe},0.15,5,${icbo},112,0.22,${temp},${at}`;
const goodFile = (hfeBase = 120, at = '2025-12-31T20:00:00Z') =>
  [HEADER, ...Array.from({ length: 10 }, (_, i) => line(`A${String(i + 1).padStart(3, '0')}`, hfeBase + i, '20e-9', at))].join('\n') + '\n';

const uploadPath = (h: number, preview = false, run = () => runId) =>
  `/api/measurements/runs/${run()}/read-points/${h}/upload${preview ? '?preview=1' : ''}`;

describe('measurement upload', () => {
  // HTRB-T-01 has started, so time zero is an engineer's entry with a reason (a deviation;
  // tests/api/records.test.ts covers the rule itself).
  const LATE_T0 = 'Time zero entered after Start in this test';

  it('stores a good time-zero file: every row inserted, the upload recorded and audited', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post(uploadPath(0)).field('reason', LATE_T0).attach('file', Buffer.from(goodFile()), 'tz.csv');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ status: 'stored', rowsTotal: 10, stored: 10, inserted: 10, replaced: 0, rejected: 0 });
    expect(res.body.rows.map((r: { row: number }) => r.row)).toEqual([2, 3, 4, 5, 6, 7, 8, 9, 10, 11]);
    expect(await t.ctx.ds.getRepository(MeasurementEntity).count({ where: { runId, readPointH: 0 } })).toBe(10);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'measurement.upload', entityId: runId });
    expect(audit.details).toMatchObject({ readPointH: 0, inserted: 10 });
  });

  it('the same file twice stores nothing the second time and says so (200, already stored)', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(uploadPath(0)).attach('file', Buffer.from(goodFile()), 'tz-again.csv');
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('already-stored');
    expect(res.body.stored).toBe(0);
    expect(res.body.previousUpload).toMatchObject({ readPointH: 0, rowsStored: 10 });
    expect(res.body.notes[0]).toMatch(/already stored/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('re-checking the stored file gives one message: identical, nothing to store (counts add up)', async () => {
    const op = await t.signIn('operator');
    const res = await op.post(uploadPath(0, true)).attach('file', Buffer.from(goodFile()), 'tz-again.csv');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'preview', rowsTotal: 10, inserted: 0, replaced: 0, unchanged: 10, rejected: 0, stored: 0 });
    expect(res.body.notes[0]).toMatch(
      /^10 rows: identical to the file stored on \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC, nothing to store \(10 already stored\)\.$/,
    );
    expect(res.body.notes.join(' ')).not.toMatch(/replace a stored reading/);
  });

  it('the same file offered for another read point is a 409 and changes nothing', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(uploadPath(168)).attach('file', Buffer.from(goodFile()), 'tz.csv');
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/already stored for read point 0 h/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('a corrected file replaces readings device by device (a new version per changed reading)', async () => {
    const eng = await t.signIn('engineer');
    const corrected = goodFile().replace('A001,120,', 'A001,121.5,');
    const res = await eng.post(uploadPath(0)).field('reason', LATE_T0).attach('file', Buffer.from(corrected), 'tz-corrected.csv');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ inserted: 0, replaced: 1, unchanged: 9, stored: 1 });
    expect(await t.ctx.ds.getRepository(MeasurementEntity).count({ where: { runId, readPointH: 0 } })).toBe(10);
    const dev = await t.ctx.ds.getRepository(DeviceEntity).findOneByOrFail({ serial: 'A001' });
    const m = await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: dev.id, readPointH: 0 });
    expect(m.hfe).toBe(121.5);
  });

  const badFile = [
    HEADER,
    line('A001', 110, '25e-9', '2026-02-12T08:00:00Z'), // 2 good
    line('ZZ999', 110), // 3 unknown serial
    line('B001', 110), // 4 registered, other lot, not on this run
    line('A002', 'abc'), // 5 not a number
    line('A003', 110, '-5e-9'), // 6 negative leakage
    line('A004', 110), // 7 duplicate (with 8)
    line('A004', 111), // 8
    line('=HYPERLINK("x")', 110), // 9 formula serial
    line('A005', '@SUM(1)'), // 10 formula cell
    line('A006', '+cmd'), // 11 formula-looking "+"
    'A007,,0.15,5,20e-9,112,0.22,25,2026-02-12T08:00:00Z', // 12 empty hFE
    line('A011', 110), // 13 registered in the lot but not on this run
  ].join('\n');

  it('preview checks every row, gives each bad row its number and reason, and stores nothing', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(uploadPath(168, true)).attach('file', Buffer.from(badFile), 'rp168.csv');
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('preview');
    expect(res.body.rowsTotal).toBe(12);
    const byRow = Object.fromEntries(res.body.rows.map((r: { row: number; outcome: string; reasons: string[] }) => [r.row, r]));
    expect(byRow[2].outcome).toBe('insert');
    const reason = (row: number) => byRow[row].reasons.join(' ');
    expect(reason(3)).toMatch(/Unknown serial ZZ999/);
    expect(reason(4)).toMatch(/B001 \(lot HG9901-B\) is not in run HTRB-T-01/);
    expect(reason(5)).toMatch(/hfe "abc" is not a number/);
    expect(reason(6)).toMatch(/Negative leakage/);
    expect(reason(7)).toMatch(/Duplicate in file: serial A004 appears in rows 7, 8/);
    expect(reason(8)).toMatch(/Duplicate in file/);
    expect(reason(9)).toMatch(/looks like a spreadsheet formula/);
    expect(reason(10)).toMatch(/looks like a spreadsheet formula/);
    expect(reason(11)).toMatch(/looks like a spreadsheet formula/);
    expect(reason(12)).toMatch(/hfe is empty/);
    expect(reason(13)).toMatch(/A011 \(lot HG9901-A\) is not in run/);
    expect(res.body.rejected).toBe(11);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('storing the same file keeps the good row and stores nothing for the bad ones', async () => {
    const op = await t.signIn('operator');
    const before = await t.ctx.ds.getRepository(MeasurementEntity).count({ where: { runId, readPointH: 168 } });
    const res = await op.post(uploadPath(168)).attach('file', Buffer.from(badFile), 'rp168.csv');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ stored: 1, rejected: 11 });
    expect(await t.ctx.ds.getRepository(MeasurementEntity).count({ where: { runId, readPointH: 168 } })).toBe(before + 1);
    const up = await t.ctx.ds.getRepository(MeasurementUploadEntity).findOneByOrFail({ id: res.body.uploadId });
    expect(up.rowsRejected).toBe(11);
    expect(up.rowErrors).toHaveLength(11);
  });

  it('a file where every row is bad is a 422 with the rows, and nothing is stored', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(uploadPath(168)).attach('file', Buffer.from([HEADER, line('ZZ1', 1), line('ZZ2', 1)].join('\n')), 'bad.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('unprocessable');
    expect(res.body.error.rows).toHaveLength(2);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('flags readings taken more than 96 h after bias removal as late [pub: JESD22-A108 — wording not checked, treat as memory]', async () => {
    const op = await t.signIn('operator');
    // REFERENCE.md §1 check: removed at t0, measured at t0 + 97 h → late; + 95 h → not late.
    const at = (h: number) => new Date(BIAS_OFF.getTime() + h * 3600_000).toISOString();
    const file = [HEADER, line('A008', 118, '21e-9', at(97)), line('A009', 119, '21e-9', at(95))].join('\n');
    const res = await op.post(uploadPath(500)).attach('file', Buffer.from(file), 'rp500.csv');
    expect(res.status).toBe(201);
    expect(res.body.late).toBe(1);
    const late = Object.fromEntries(res.body.rows.map((r: { serial: string; late: boolean }) => [r.serial, r.late]));
    expect(late).toEqual({ A008: true, A009: false });
    const dev = await t.ctx.ds.getRepository(DeviceEntity).findOneByOrFail({ serial: 'A008' });
    expect((await t.ctx.ds.getRepository(MeasurementEntity).findOneByOrFail({ runId, deviceId: dev.id, readPointH: 500 })).late).toBe(true);
  });

  it('maps the file’s own headers and converts the units its headers state (nA, mA, mV) to SI', async () => {
    const op = await t.signIn('operator');
    const file = ['Serial No;Gain;Ic mA;Vce (V);Leak nA;Vcb/V;Vsat [mV];Temp', 'A010;117;150;5;22.5;112;225;25'].join('\r\n');
    const mapping = {
      'Serial No': 'serial',
      Gain: 'hfe',
      'Ic mA': 'hfe_ic_a',
      'Vce (V)': 'hfe_vce_v',
      'Leak nA': 'icbo_a',
      'Vcb/V': 'icbo_vcb_v',
      'Vsat [mV]': 'vcesat_v',
      Temp: 'temp_c',
    };
    const res = await op
      .post(uploadPath(168, true))
      .field('mapping', JSON.stringify(mapping))
      .attach('file', Buffer.from(file), 'tester.csv');
    expect(res.status).toBe(200);
    const v = res.body.rows[0].values;
    // SI prefixes n, m = 1e-9, 1e-3 (BIPM SI Brochure, 9th ed.).
    expect(v.icboA).toBeCloseTo(22.5e-9, 15);
    expect(v.hfeIcA).toBeCloseTo(0.15, 12);
    expect(v.vcesatV).toBeCloseTo(0.225, 12);
  });

  it('a header without a unit refuses the file (422) naming the column; units sent beside the file are refused (400)', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const file = ['serial,hfe,IC,VCE (V),ICBO [nA],VCB (V),VCE(sat)/V', 'A010,117,0.15,5,22.5,112,0.2'].join('\n');
    const sideUnits = await op
      .post(uploadPath(168))
      .field('units', JSON.stringify({ icbo: 'nA', hfeIc: 'A', vcesat: 'V' }))
      .attach('file', Buffer.from(file), 'no-unit.csv');
    expect(sideUnits.status).toBe(400);
    expect(sideUnits.body.error.fields.units[0]).toMatch(/^Units are read from the file’s column headers/);
    const res = await op.post(uploadPath(168)).attach('file', Buffer.from(file), 'no-unit.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      'The file\'s units cannot be read; nothing was checked. Column "IC" (IC for hFE) states no unit; write it in the header, e.g. "IC (A)" (pA, nA, µA, mA, A).',
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('10 A of collector current for hFE is refused against the part’s rated IC max, with the numbers', async () => {
    const op = await t.signIn('operator');
    const file = [
      'serial,hfe,IC (A),VCE (V),ICBO (nA),VCB (V),VCE(sat) (V)',
      'A010,117,10,5,22.5,112,0.2',
      'A009,119,0.15,5,21,112,0.2',
    ].join('\n');
    const res = await op.post(uploadPath(168, true)).attach('file', Buffer.from(file), 'ten-amps.csv');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ rowsTotal: 2, rejected: 1 });
    // HPD-T100 is inserted with IC max 1.5 A (tests/support/db.ts insertTestDeviceType).
    expect(res.body.rows[0].reasons).toEqual([
      'The hFE test current 10 A is above the rated IC max of HPD-T100 (1.5 A); check the unit in the header.',
    ]);
    expect(res.body.rows[1].outcome).not.toBe('rejected');
  });

  it('a file without a required column is refused as a whole, naming the column', async () => {
    const op = await t.signIn('operator');
    const res = await op.post(uploadPath(168, true)).attach('file', Buffer.from('serial,hfe\nA001,100\n'), 'short.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/no column for hfe_ic_a/);
  });

  it('refuses a file over 2 MB with 413 in the error shape, storing nothing', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const big = Buffer.alloc(2 * 1024 * 1024 + 10, 'a');
    const res = await op.post(uploadPath(168)).attach('file', big, 'big.csv');
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('too_large');
    expect(res.body.error.message).toMatch(/larger than 2 MB/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses a read point outside the plan and one the run has not reached', async () => {
    const op = await t.signIn('operator');
    const off = await op.post(uploadPath(300)).attach('file', Buffer.from(goodFile()), 'x.csv');
    expect(off.status).toBe(422);
    expect(off.body.error.message).toMatch(/not in plan/);
    const early = await op.post(uploadPath(1000)).attach('file', Buffer.from(goodFile()), 'x.csv');
    expect(early.status).toBe(422);
    expect(early.body.error.message).toMatch(/not reached yet/);
    const otherRun = await op.post(uploadPath(500, false, () => otherRunId)).attach('file', Buffer.from(goodFile()), 'x.csv');
    expect(otherRun.status).toBe(422);
  });

  it('a manager may look but not upload', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.post(uploadPath(0)).attach('file', Buffer.from(goodFile()), 'tz.csv');
    expect(res.status).toBe(403);
  });
});

describe('manual entry', () => {
  const entry = (serial: string, hfe: number) => ({
    serial,
    hfe,
    hfeIcA: 0.15,
    hfeVceV: 5,
    icboA: 21e-9,
    icboVcbV: 112,
    vcesatV: 0.221,
    measuredC: 25,
    measuredAt: '2026-02-12T09:00:00Z',
  });

  it('stores a few devices typed in by hand', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng
      .post(`/api/measurements/runs/${runId}/read-points/168/measurements`)
      .send([entry('A002', 119), entry('A003', 120)]);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ inserted: 2, rejected: 0 });
  });

  it('all or nothing: one bad serial refuses the whole entry with a reason per row', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng
      .post(`/api/measurements/runs/${runId}/read-points/168/measurements`)
      .send([entry('A005', 119), entry('NOPE', 120)]);
    expect(res.status).toBe(422);
    expect(res.body.error.rows[1].reasons[0]).toMatch(/Unknown serial NOPE/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('negative leakage in the JSON body is a 400 field error', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng
      .post(`/api/measurements/runs/${runId}/read-points/168/measurements`)
      .send([{ ...entry('A005', 119), icboA: -1e-9 }]);
    expect(res.status).toBe(400);
    expect(res.body.error.fields['0.icboA']).toEqual(['Leakage cannot be negative']);
  });
});

describe('drift per device', () => {
  it('changes from time zero, hFE referred to the reference temperature when measured warm, first failed read point', async () => {
    const op = await t.signIn('operator');
    // A010 measured at 35 °C with a gain that, referred to 25 °C, equals its time-zero 129: no real change.
    const warmHfe = 129 * Math.pow((35 + 273.15) / (25 + 273.15), 1.6);
    // A001's leakage grows from 20 nA to 300 nA: change 280 nA > max(20 nA, 200 nA) → fails at 500 h.
    const file = [
      HEADER,
      line('A010', warmHfe.toFixed(3), '20e-9', '2026-02-12T08:00:00Z', 35),
      line('A001', 120, '300e-9', '2026-02-12T08:00:00Z'),
    ].join('\n');
    expect((await op.post(uploadPath(500)).attach('file', Buffer.from(file), 'rp500b.csv')).status).toBe(201);
    const res = await op.get(`/api/measurements/runs/${runId}/drift`);
    expect(res.status).toBe(200);
    const a10 = res.body.devices.find((d: { serial: string }) => d.serial === 'A010');
    const rp = a10.readPoints.find((r: { readPointH: number }) => r.readPointH === 500);
    expect(rp.hfeNormalised).toBe(true);
    expect(rp.hfeNote).toMatch(/measured at 35 °C, referred to 25 °C with XTB 1.6/);
    expect(rp.hfe).toBeCloseTo(129, 2);
    expect(rp.parameters.find((p: { parameter: string }) => p.parameter === 'hfe').changePct).toBeCloseTo(0, 2);
    const a1 = res.body.devices.find((d: { serial: string }) => d.serial === 'A001');
    expect(a1.status).toBe('fail');
    expect(a1.firstFailedH).toBe(500);
    const socket = await t.ctx.ds.getRepository(RunSocketEntity).findOneByOrFail({ runId, deviceId: a1.deviceId });
    expect(socket.failedAtH).toBe(500);
  });

  it('lists runs and read-point status for the readings screen', async () => {
    const op = await t.signIn('operator');
    const res = await op.get(`/api/measurements/runs/${runId}`);
    expect(res.status).toBe(200);
    expect(res.body.devices).toHaveLength(10);
    expect(res.body.readPoints.map((r: { hours: number; reached: boolean }) => [r.hours, r.reached])).toEqual([
      [0, true],
      [168, true],
      [500, true],
      [1000, false],
    ]);
    const list = await op.get('/api/measurements/runs');
    expect(list.body.items.map((r: { code: string }) => r.code)).toEqual(expect.arrayContaining(['HTRB-T-01', 'HTRB-T-02']));
  });
});
