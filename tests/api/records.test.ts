/**
 * Append-only measurements and kept upload files (issue #21 items 1 and 2): a correction is a new
 * version with reason, person and time; time zero is locked after Start; a finished run's readings
 * and a failing device's failure change only by an engineer with a reason, as a deviation on the
 * lot; every reader of "the current reading" reads the latest version; uploaded files come back
 * byte for byte and the same bytes are kept once.
 */
import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { DeviceEntity, LotEntity, RigEntity, StressPlanEntity } from '../../server/db/entities';
import { currentLotReadings } from '../../server/modules/measurements/measurements.data';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestDeviceType, tableCounts } from '../support/db';

let t: TestApp;
let runId: string;
let sampleId: string;
let lotId: string;
let finishedRunId: string;
const devices = new Map<string, string>();

async function makePlan(m: EntityManager, deviceTypeId: string) {
  return m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'HTRB 150 °C records plan',
      kind: 'htrb',
      deviceTypeId,
      chamberC: 150,
      humidityPct: null,
      bias: { vcbV: 100, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 6,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
      eaEv: 0.7,
      useC: 55,
    }),
  );
}

beforeAll(async () => {
  t = await createTestApp();
  await t.ctx.ds.transaction(async (m) => {
    const type = await insertTestDeviceType(m, 'HPD-R210');
    const plan = await makePlan(m, type.id);
    const rig = await m.save(
      m.create(RigEntity, {
        code: 'OV-77',
        name: 'OV-77',
        socketCount: 32,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-77',
        mqttSecretHash: 'x',
        credentialsIssuedAt: new Date(),
      }),
    );
    const lot = await m.save(m.create(LotEntity, { code: 'HG7701-R', deviceTypeId: type.id, quantity: 50 }));
    lotId = lot.id;
    const ds = await m.save(Array.from({ length: 6 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `R${i + 1}` })));
    for (const d of ds) devices.set(d.serial, d.id);
    const run = await insertHistoryRun(m, {
      code: 'HTRB-R-01',
      plan,
      deviceType: type,
      rig,
      lots: [{ lot, devices: ds, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
      state: 'stressing',
      startedAt: new Date(Date.now() - 40 * 86400_000),
      stressHours: 600,
      measuredH: [0],
      noise: 0,
    });
    runId = run.id;
    sampleId = run.sampleId!;
    const lot2 = await m.save(m.create(LotEntity, { code: 'HG7702-R', deviceTypeId: type.id, quantity: 50 }));
    const ds2 = await m.save(Array.from({ length: 3 }, (_, i) => m.create(DeviceEntity, { lotId: lot2.id, serial: `F${i + 1}` })));
    const done = await insertHistoryRun(m, {
      code: 'HTRB-R-02',
      plan,
      deviceType: type,
      rig: null,
      lots: [{ lot: lot2, devices: ds2, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
      state: 'finished',
      startedAt: new Date(Date.now() - 60 * 86400_000),
      stressHours: 1000,
      measuredH: [0, 168, 500, 1000],
      noise: 0,
      deviation: 'Small records test sample, lab decision',
    });
    finishedRunId = done.id;
  });
});
afterAll(async () => {
  await t.close();
});

const entry = (serial: string, hfe: number, extra: Record<string, unknown> = {}) => ({
  serial,
  hfe,
  hfeIcA: 0.15,
  hfeVceV: 5,
  icboA: 20e-9,
  icboVcbV: 112,
  vcesatV: 0.22,
  measuredC: 25,
  measuredAt: new Date(Date.now() - 3600_000).toISOString(),
  ...extra,
});
const manualPath = (h: number, run = () => runId) => `/api/measurements/runs/${run()}/read-points/${h}/measurements`;
const historyOf = (serial: string, run = () => runId) => `/api/measurements/runs/${run()}/devices/${devices.get(serial)}/history`;
const reading = async (h: number, run = () => runId) =>
  (await t.signIn('engineer')).get(`/api/measurements/runs/${run()}/read-points/${h}`);

describe('corrections are new versions', () => {
  it('manual entry over a stored value without a reason is a 422 naming the device, and changes nothing', async () => {
    const op = await t.signIn('operator');
    expect((await op.post(manualPath(168)).send([entry('R1', 120)])).status).toBe(201);
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(manualPath(168)).send([entry('R1', 121)]);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/need a reason/);
    expect(res.body.error.rows[0].reasons[0]).toBe(
      'Device R1 already has a reading at 168 h; a correction keeps it as an earlier version and needs a reason.',
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const short = await op.post(manualPath(168)).send([entry('R1', 121, { reason: 'typo' })]);
    expect(short.status).toBe(400);
    expect(short.body.error.fields['0.reason'][0]).toMatch(/at least 10 characters/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('with a reason the correction is stored as version 2; the history keeps both with reason, person and time', async () => {
    const op = await t.signIn('operator');
    const res = await op.post(manualPath(168)).send([entry('R1', 121.5, { reason: 'Transcribed 120 instead of 121.5' })]);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ replaced: 1, inserted: 0 });
    const h = await op.get(historyOf('R1'));
    expect(h.status).toBe(200);
    const at168 = h.body.versions.filter((v: { readPointH: number }) => v.readPointH === 168);
    expect(
      at168.map((v: { version: number; hfe: number; current: boolean; reason: string | null }) => [v.version, v.hfe, v.current, v.reason]),
    ).toEqual([
      [1, 120, false, null],
      [2, 121.5, true, 'Transcribed 120 instead of 121.5'],
    ]);
    expect(at168[1].enteredByName).toBeTruthy();
    expect(Date.parse(at168[1].recordedAt)).toBeGreaterThanOrEqual(Date.parse(at168[0].recordedAt));
    const list = await op.get(`/api/measurements/runs/${runId}/read-points/168`);
    const r1 = list.body.items.find((x: { serial: string }) => x.serial === 'R1');
    expect(r1).toMatchObject({ hfe: 121.5, version: 2, changeReason: 'Transcribed 120 instead of 121.5', deviation: [] });
    const audit = await t.ctx.ds.query(`SELECT action, details FROM audit_log WHERE entity_id = $1 ORDER BY id DESC LIMIT 1`, [runId]);
    expect(audit[0].action).toBe('measurement.manual');
    expect(audit[0].details.corrections).toEqual([{ serial: 'R1', reason: 'Transcribed 120 instead of 121.5' }]);
  });

  it('the correct action: no reason is a 400 and changes nothing; with one it adds version 3', async () => {
    const op = await t.signIn('operator');
    const list = await op.get(`/api/measurements/runs/${runId}/read-points/168`);
    const id = list.body.items.find((x: { serial: string }) => x.serial === 'R1').id;
    const before = await tableCounts(t.ctx.ds);
    const body = { hfe: 122, hfeIcA: 0.15, hfeVceV: 5, icboA: 20e-9, icboVcbV: 112, vcesatV: 0.22, measuredC: 25 };
    const bad = await op.post(`/api/measurements/readings/${id}/corrections`).send(body);
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.reason).toBeDefined();
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await op.post(`/api/measurements/readings/${id}/corrections`).send({ ...body, reason: 'Re-measured on the second tester' });
    expect(ok.status).toBe(201);
    expect(ok.body).toMatchObject({ id, hfe: 122, version: 3, changeReason: 'Re-measured on the second tester' });
    const unchanged = await tableCounts(t.ctx.ds);
    const same = await op
      .post(`/api/measurements/readings/${id}/corrections`)
      .send({ ...body, reason: 'Re-measured on the second tester' });
    expect(same.status).toBe(422);
    expect(await tableCounts(t.ctx.ds)).toEqual(unchanged);
    expect(same.body.error.message).toMatch(/equal the stored reading of R1 at 168 h; nothing was corrected/);
    const h = await op.get(historyOf('R1'));
    expect(h.body.versions.filter((v: { readPointH: number }) => v.readPointH === 168).map((v: { hfe: number }) => v.hfe)).toEqual([
      120, 121.5, 122,
    ]);
  });

  it('the database refuses to change or delete a version, or to delete a reading', async () => {
    await expect(t.ctx.ds.query(`UPDATE measurement_versions SET hfe = 1 WHERE run_id = $1`, [runId])).rejects.toThrow(/append-only/);
    await expect(t.ctx.ds.query(`DELETE FROM measurement_versions WHERE run_id = $1`, [runId])).rejects.toThrow(/append-only/);
    await expect(t.ctx.ds.query(`DELETE FROM measurements WHERE run_id = $1`, [runId])).rejects.toThrow(/append-only/);
  });
});

describe('time zero after Start, finished runs, failures', () => {
  it('time zero after Start: an operator is refused (403), an engineer without a reason gets a 422; nothing changes', async () => {
    const op = await t.signIn('operator');
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(manualPath(0)).send([entry('R2', 119, { reason: 'Time zero tester file was wrong' })]);
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(
      /^Only an engineer may make this change\. Time zero of run HTRB-R-01 is locked since stress started on /,
    );
    const noReason = await eng.post(manualPath(0)).send([entry('R2', 119)]);
    expect(noReason.status).toBe(422);
    expect(noReason.body.error.rows[0].reasons).toContain(
      noReason.body.error.rows[0].reasons.find((r: string) => r.startsWith('Time zero of run HTRB-R-01 is locked')),
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('an engineer with a reason may; it shows as a deviation on the lot (evidence and lot analysis)', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post(manualPath(0)).send([entry('R2', 119, { reason: 'Time zero tester file was wrong' })]);
    expect(res.status).toBe(201);
    const ev = await eng.get(`/api/evidence/samples/${sampleId}`);
    expect(ev.status).toBe(200);
    expect(ev.body.recordDeviations).toEqual([
      expect.objectContaining({
        serial: 'R2',
        readPointH: 0,
        version: 2,
        kinds: ['time-zero-after-start'],
        reason: 'Time zero tester file was wrong',
      }),
    ]);
    const lot = await eng.get(`/api/analytics/lots/${lotId}`);
    expect(lot.status).toBe(200);
    expect(lot.body.records.deviations).toEqual([
      expect.objectContaining({
        serial: 'R2',
        readPointH: 0,
        deviation: ['time-zero-after-start'],
        reason: 'Time zero tester file was wrong',
      }),
    ]);
  });

  it('a failing device cannot be quietly un-failed: open → measured needs an engineer and a reason, and stays in the history', async () => {
    const eng = await t.signIn('engineer');
    const open = { serial: 'R3', result: 'open', measuredC: 25, measuredAt: new Date(Date.now() - 3600_000).toISOString() };
    expect((await eng.post(manualPath(168)).send([open])).status).toBe(201);
    const failed = await t.ctx.ds.query(`SELECT failed_at_h FROM run_sockets WHERE run_id = $1 AND device_id = $2`, [
      runId,
      devices.get('R3'),
    ]);
    expect(failed[0].failed_at_h).toBe(168);
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(manualPath(168)).send([entry('R3', 120, { reason: 'Probe was not seated; the part is fine' })]);
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/Device R3 counts as failed from 168 h; this change would withdraw that failure/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await eng.post(manualPath(168)).send([entry('R3', 120, { reason: 'Probe was not seated; the part is fine' })]);
    expect(ok.status).toBe(201);
    const h = await eng.get(historyOf('R3'));
    const at168 = h.body.versions.filter((v: { readPointH: number }) => v.readPointH === 168);
    expect(at168.map((v: { result: string; deviation: string[] }) => [v.result, v.deviation])).toEqual([
      ['open', []],
      ['measured', ['failure-withdrawn']],
    ]);
    const lot = await eng.get(`/api/analytics/lots/${lotId}`);
    expect(lot.body.records.deviations.map((d: { serial: string; deviation: string[] }) => [d.serial, d.deviation])).toEqual([
      ['R2', ['time-zero-after-start']],
      ['R3', ['failure-withdrawn']],
    ]);
  });

  it("a finished run's reading changes only by an engineer with a reason (deviation)", async () => {
    const list = await reading(500, () => finishedRunId);
    expect(list.status).toBe(200);
    const x = list.body.items[0];
    const body = {
      hfe: x.hfe + 1,
      hfeIcA: x.hfeIcA,
      hfeVceV: x.hfeVceV,
      icboA: x.icboA,
      icboVcbV: x.icboVcbV,
      vcesatV: x.vcesatV,
      measuredC: 25,
    };
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op
      .post(`/api/measurements/readings/${x.id}/corrections`)
      .send({ ...body, reason: 'Wrong column in the tester file' });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/Run HTRB-R-02 has finished; changing its readings needs an engineer's reason/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const eng = await t.signIn('engineer');
    const ok = await eng
      .post(`/api/measurements/readings/${x.id}/corrections`)
      .send({ ...body, reason: 'Wrong column in the tester file' });
    expect(ok.status).toBe(201);
    expect(ok.body.deviation).toEqual(['finished-run-changed']);
  });
});

describe('every reader of the current reading reads the latest version', () => {
  it('drift, evidence readings, lot analysis, the socket failure mirror and the lot read for sign-off', async () => {
    const eng = await t.signIn('engineer');
    // R1 at 168 h: 120 → 121.5 → 122 (time zero 120 from the seed). R3: open, then measured 120.
    const drift = await eng.get(`/api/measurements/runs/${runId}/drift`);
    const r1 = drift.body.devices.find((d: { serial: string }) => d.serial === 'R1');
    const t0 = (await reading(0)).body.items.find((x: { serial: string }) => x.serial === 'R1').hfe;
    const p168 = r1.readPoints.find((p: { readPointH: number }) => p.readPointH === 168);
    expect(p168.hfeRaw).toBe(122);
    const hfe = p168.parameters.find((p: { parameter: string }) => p.parameter === 'hfe');
    expect(hfe.initial).toBe(t0);
    expect(hfe.reading).toBe(122);

    const ev = await eng.get(`/api/evidence/samples/${sampleId}`);
    const cov168 = ev.body.coverage.find((c: { readPointH: number }) => c.readPointH === 168);
    expect(cov168.measured).toBe(2); // R1 and R3, once each (not one per version)
    expect(cov168.catastrophic).toBe(0); // R3's open is a superseded version
    const dev = ev.body.devices.find((d: { serial: string }) => d.serial === 'R3');
    expect(dev.failedAtH).toBeNull();

    const lot = await eng.get(`/api/analytics/lots/${lotId}`);
    const r3 = lot.body.devices.find((d: { serial: string }) => d.serial === 'R3');
    expect(r3).toMatchObject({ status: 'pass', firstFailedH: null });
    expect(lot.body.records.corrections.filter((v: { serial: string }) => v.serial === 'R1').map((v: { hfe: number }) => v.hfe)).toEqual([
      120, 121.5, 122,
    ]);

    const cur = await currentLotReadings(t.ctx.ds.manager, lotId);
    const keys = cur.map((c) => `${c.runId}:${c.deviceId}:${c.readPointH}`);
    expect(new Set(keys).size).toBe(keys.length);
    expect(cur.find((c) => c.deviceId === devices.get('R1') && c.readPointH === 168)).toMatchObject({ hfe: 122, version: 3 });
  });

  it('the lot exports (CSV and PDF) keep the earlier values with their reasons', async () => {
    const eng = await t.signIn('engineer');
    const csv = await eng.get(`/api/reports/lots/${lotId}/report.csv`);
    expect(csv.status).toBe(200);
    const lines = csv.text.split('\r\n');
    const corr = lines.filter((l) => l.startsWith('HTRB-R-01,R1,168,'));
    expect(corr).toHaveLength(3);
    expect(corr[0]).toMatch(/^HTRB-R-01,R1,168,1,no,measured,120,/);
    expect(corr[1]).toMatch(/^HTRB-R-01,R1,168,2,no,measured,121\.5,.*Transcribed 120 instead of 121\.5/);
    expect(corr[2]).toMatch(/^HTRB-R-01,R1,168,3,yes,measured,122,.*Re-measured on the second tester/);
    const pdf = await eng
      .get(`/api/reports/lots/${lotId}/report.pdf`)
      .buffer(true)
      .parse((res, cb) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(pdf.status).toBe(200);
    expect((pdf.body as Buffer).subarray(0, 5).toString()).toBe('%PDF-');
  });
});

describe('raw upload files are kept', () => {
  const HEADER = 'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_a,icbo_vcb_v,vcesat_v,temp_c,measured_at';
  const at = () => new Date(Date.now() - 7200_000).toISOString();
  // A byte-order mark, CRLF line ends and a µ in a comment-free header variant: bytes a text round trip could change.
  const file = (hfe = 110) =>
    Buffer.from(
      `\uFEFF${HEADER}\r\n${['R4', 'R5', 'R6'].map((s, i) => `${s},${hfe + i},0.15,5,20e-9,112,0.22,25,${at()}`).join('\r\n')}\r\n`,
      'utf8',
    );
  let fileBytes: Buffer;

  it('an upload keeps its file; the upload record links to it; the download returns the exact bytes', async () => {
    const op = await t.signIn('operator');
    fileBytes = file();
    const res = await op.post(`/api/measurements/runs/${runId}/read-points/500/upload`).attach('file', fileBytes, 'tester 500 h µ.csv');
    expect(res.status).toBe(201);
    const list = await op.get(`/api/measurements/runs/${runId}/uploads`);
    expect(list.status).toBe(200);
    const up = list.body.items.find((u: { id: string }) => u.id === res.body.uploadId);
    expect(up).toMatchObject({ fileName: 'tester 500 h µ.csv', sizeBytes: fileBytes.length, readPointH: 500, rowsStored: 3 });
    const dl = await op
      .get(up.downloadPath)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    expect(dl.status).toBe(200);
    expect(Buffer.compare(dl.body as Buffer, fileBytes)).toBe(0);
    expect(dl.headers['x-content-sha256']).toBe(res.body.fileSha256);
    expect(dl.headers['content-disposition']).toContain(`filename*=UTF-8''${encodeURIComponent('tester 500 h µ.csv')}`);
  });

  it('the same bytes again store nothing new (deduplicated by SHA-256; one kept copy)', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const again = await op.post(`/api/measurements/runs/${runId}/read-points/500/upload`).attach('file', fileBytes, 'again.csv');
    expect(again.status).toBe(200);
    expect(again.body.status).toBe('already-stored');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const files = await t.ctx.ds.query(`SELECT count(*)::int AS n FROM measurement_files WHERE sha256 = $1`, [again.body.fileSha256]);
    expect(files[0].n).toBe(1);
  });

  it('a corrected file without a reason is a 422 and changes nothing; with one the changed readings get version 2', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const corrected = file(111);
    const res = await op.post(`/api/measurements/runs/${runId}/read-points/500/upload`).attach('file', corrected, 'fixed.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe(
      '3 of 3 readings would change a stored value or record a deviation and need a reason (see rows). Nothing was stored.',
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await op
      .post(`/api/measurements/runs/${runId}/read-points/500/upload`)
      .field('reason', 'Tester offset corrected by +1')
      .attach('file', corrected, 'fixed.csv');
    expect(ok.status).toBe(201);
    expect(ok.body).toMatchObject({ replaced: 3 });
    const h = await op.get(historyOf('R4'));
    const at500 = h.body.versions.filter((v: { readPointH: number }) => v.readPointH === 500);
    expect(at500.map((v: { hfe: number; reason: string | null; fileName: string }) => [v.hfe, v.reason, v.fileName])).toEqual([
      [110, null, 'tester 500 h µ.csv'],
      [111, 'Tester offset corrected by +1', 'fixed.csv'],
    ]);
    const files = await t.ctx.ds.query(`SELECT count(*)::int AS n FROM measurement_files`);
    expect(files[0].n).toBe(before.measurement_files + 1);
  });

  it('an unknown upload is a 404; a bad id a 400', async () => {
    const op = await t.signIn('operator');
    expect((await op.get(`/api/measurements/uploads/${randomUUID()}/file`)).status).toBe(404);
    expect((await op.get(`/api/measurements/uploads/nope/file`)).status).toBe(400);
  });
});
