/**
 * Lot report (PDF and CSV from the report blocks) and certificate of conformance (issue #22 item 4).
 * The report's numbers are the lot view's (GET /api/analytics/lots/:id): sample, failures, FIT and
 * verdict are compared here cell by cell. The certificate is refused (409) for a lot that did not
 * pass or whose passed verdict no current "approved for release" signature covers.
 */
import { DeviceEntity, LotEntity, RigEntity, RigServiceRecordEntity } from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, TEST_PASSWORD, type TestApp } from '../support/api';
import { insertTestDeviceType, insertTestHtrbPlan, tableCounts } from '../support/db';
import { pdfPageCount, pdfText } from '../support/pdf-text';

let t: TestApp;
const ids: Record<string, string> = {};
const runs: Record<string, string> = {};

const binary = (r: { on: (e: string, f: (c?: Buffer) => void) => void }, cb: (e: Error | null, b: Buffer) => void) => {
  const chunks: Buffer[] = [];
  r.on('data', (c) => chunks.push(c!));
  r.on('end', () => cb(null, Buffer.concat(chunks)));
};

beforeAll(async () => {
  t = await createTestApp();
  await t.ctx.ds.transaction(async (m) => {
    const rig = await m.save(
      m.create(RigEntity, {
        code: 'OV-93',
        name: 'report oven',
        socketCount: 64,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-93',
        mqttSecretHash: 'x',
        credentialsIssuedAt: new Date(),
      }),
    );
    await m.insert(RigServiceRecordEntity, [
      { rigId: rig.id, kind: 'calibration', doneAt: new Date('2026-01-10T00:00:00Z'), dueAt: new Date('2027-01-10T00:00:00Z') },
      { rigId: rig.id, kind: 'interlock-test', doneAt: new Date('2026-02-25T00:00:00Z'), dueAt: null },
      // After the runs started: not the record the start permit read.
      { rigId: rig.id, kind: 'interlock-test', doneAt: new Date('2026-06-01T00:00:00Z'), dueAt: null },
    ]);
    const type = await insertTestDeviceType(m, 'HPD-R100');
    const plan = await insertTestHtrbPlan(m, type.id, { name: 'HTRB report plan', chamberC: 150, sampleSize: 20 });
    const mk = async (code: string, extra: Partial<Parameters<typeof insertHistoryRun>[1]> = {}) => {
      const lot = await m.save(
        m.create(LotEntity, {
          code,
          deviceTypeId: type.id,
          quantity: 1000,
          notes: '',
          waferLot: 'W12',
          assemblyLot: 'A77-3',
          dieRevision: 'B',
        }),
      );
      const devices = await m.save(
        Array.from({ length: 20 }, (_, i) =>
          m.create(DeviceEntity, { lotId: lot.id, serial: `${code.slice(-1)}${String(i + 1).padStart(4, '0')}` }),
        ),
      );
      const run = await insertHistoryRun(m, {
        code: `R-${code}`,
        plan,
        deviceType: type,
        rig,
        lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: -2, leakageGrowthPer1000h: 1.2 } }],
        state: 'finished',
        startedAt: new Date('2026-03-01T00:00:00Z'),
        stressHours: 1000,
        measuredH: [0, 168, 500, 1000],
        noise: 0,
        junctionC: 150,
        ...extra,
      });
      ids[code] = lot.id;
      runs[code] = run.id;
    };
    await mk('HG9701-A');
    await mk('HG9701-F', {
      failures: [
        { serial: 'F0004', atH: 500, mode: 'leakage' },
        { serial: 'F0009', atH: 1000, mode: 'gain' },
      ],
    });
  });
});
afterAll(async () => {
  await t.close();
});

/** The cells of the CSV line that starts with `first` in the block titled `title`. */
function csvRow(csv: string, title: string, first: string): string[] {
  const lines = csv.split('\r\n');
  const at = lines.indexOf(title);
  expect(at).toBeGreaterThan(0);
  const row = lines.slice(at + 2).find((l) => l.startsWith(`${first},`));
  expect(row).toBeDefined();
  return row!.split(',');
}

describe('lot report', () => {
  it("PDF and CSV state the lot view's sample, failures, FIT and verdict, with the traceability fields", async () => {
    const mgr = await t.signIn('manager');
    const lot = (await mgr.get(`/api/analytics/lots/${ids['HG9701-F']}`)).body;
    expect(lot.verdict).toBe('failed');
    const p = lot.plans[0];
    expect(p.sample).toMatchObject({ planned: 20, judged: 20, failures: 2 });
    expect(p.fit).not.toBeNull();

    const csv = await mgr.get(`/api/reports/lots/${ids['HG9701-F']}/report.csv`).buffer(true);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/^text\/csv/);
    expect(csv.text).toContain('\r\nWafer lot,W12\r\nAssembly lot,A77-3\r\nDie revision,B\r\n');
    expect(csv.text).toContain('\r\nVerdict,Failed\r\n');
    const sample = csvRow(csv.text, 'Samples per plan', 'HTRB report plan');
    // Plan, Runs, Verdict, Planned, Booked, Judged, Removed, Failures, Accept, Confidence, Plan LTPD, Demonstrated LTPD
    expect(sample.slice(2, 9)).toEqual([
      'Failed',
      String(p.sample.planned),
      String(p.sample.booked),
      String(p.sample.judged),
      String(p.sample.removed),
      String(p.sample.failures),
      String(p.sample.acceptNumber),
    ]);
    expect(Number(sample[10])).toBeCloseTo(p.sample.planLtpd, 6);
    const fit = csvRow(csv.text, 'Failure rate per mechanism', 'HTRB report plan');
    expect(Number(fit[2])).toBe(p.fit.failures);
    expect(Number(fit[7])).toBeCloseTo(p.fit.fit60, 4);
    expect(Number(fit[8])).toBeCloseTo(p.fit.fit90, 4);
    // Both failed devices in the device block, with why.
    expect(csvRow(csv.text, 'Devices counted by the verdict', 'F0004')[4]).toBe('fail');
    expect(csvRow(csv.text, 'Devices counted by the verdict', 'F0009')[4]).toBe('fail');

    const pdf = await mgr.get(`/api/reports/lots/${ids['HG9701-F']}/report.pdf`).buffer(true).parse(binary);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');
    const bytes = pdf.body as Buffer;
    expect(bytes.subarray(0, 5).toString()).toBe('%PDF-');
    expect(pdfPageCount(bytes)).toBeGreaterThanOrEqual(2);
    const text = pdfText(bytes);
    const flat = text.replace(/\s+/g, ' ');
    expect(text).toContain('Verdict: Failed');
    expect(text).toContain('W12');
    expect(text).toContain('A77-3');
    const lines = text.split('\n');
    // The sample table's row: planned, judged, failed, accept as the lot view has them.
    const at = lines.indexOf('HTRB report plan');
    expect(lines.slice(at, at + 9)).toEqual([
      'HTRB report plan',
      'R-HG9701-F',
      'Failed',
      String(p.sample.planned),
      String(p.sample.judged),
      String(p.sample.failures),
      String(p.sample.acceptNumber),
      `${+(p.sample.planLtpd * 100).toPrecision(3)} %`,
      'none',
    ]);
    // FIT figures at 4 significant figures, as printed.
    expect(lines).toContain(String(+p.fit.fit60.toPrecision(4)));
    expect(lines).toContain(String(+p.fit.fit90.toPrecision(4)));
    // The ICBO rule in the plan screen's words (shared/domain/criteria-words), not "1x initial".
    expect(flat).toContain('ICBO <= 2\u00d7 initial, or a rise of up to 200 nA (whichever allows more)');
    // Equipment: the service records in force at the start (not the later interlock test).
    expect(lines).toContain('2026-01-10 / 2027-01-10');
    expect(lines).toContain('2026-02-25');
    expect(lines).not.toContain('2026-06-01');
  });

  it('charts the run asked for; a run of another lot is not found and a bad id is refused', async () => {
    const eng = await t.signIn('engineer');
    const ok = await eng.get(`/api/reports/lots/${ids['HG9701-A']}/report.pdf?runId=${runs['HG9701-A']}`).buffer(true).parse(binary);
    expect(ok.status).toBe(200);
    expect(pdfText(ok.body as Buffer)).toContain('hFE change from time zero (run R-HG9701-A)');
    const other = await eng.get(`/api/reports/lots/${ids['HG9701-A']}/report.pdf?runId=${runs['HG9701-F']}`);
    expect(other.status).toBe(404);
    const bad = await eng.get(`/api/reports/lots/${ids['HG9701-A']}/report.csv?runId=nope`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.runId).toEqual(['Not a valid run id']);
    const op = await t.signIn('operator');
    expect((await op.get(`/api/reports/lots/${ids['HG9701-A']}/report.pdf`)).status).toBe(403);
  });
});

describe('certificate of conformance', () => {
  it('is refused for a failed lot and for a passed lot without a current approval; nothing changes', async () => {
    const mgr = await t.signIn('manager');
    const before = await tableCounts(t.ctx.ds);
    const failed = await mgr.get(`/api/reports/lots/${ids['HG9701-F']}/certificate.pdf`);
    expect(failed.status).toBe(409);
    expect(failed.body.error.message).toBe(
      'Lot HG9701-F has not passed its acceptance plan (verdict: failed); a certificate of conformance is issued only for a passed lot.',
    );
    const unsigned = await mgr.get(`/api/reports/lots/${ids['HG9701-A']}/certificate.pdf`);
    expect(unsigned.status).toBe(409);
    expect(unsigned.body.error.message).toMatch(/^Lot HG9701-A passed, but no current signature approves the verdict for release\./);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    // "Reviewed" is not an approval for release.
    const eng = await t.signIn('engineer');
    expect((await eng.post(`/api/signoff/lots/${ids['HG9701-A']}`).send({ password: TEST_PASSWORD, meaning: 'reviewed' })).status).toBe(
      201,
    );
    expect((await mgr.get(`/api/reports/lots/${ids['HG9701-A']}/certificate.pdf`)).status).toBe(409);
    // Operators and admins cannot download one at all.
    expect((await (await t.signIn('operator')).get(`/api/reports/lots/${ids['HG9701-A']}/certificate.pdf`)).status).toBe(403);
    expect((await (await t.signIn('admin')).get(`/api/reports/lots/${ids['HG9701-A']}/certificate.pdf`)).status).toBe(403);
  });

  it('is issued for a passed lot approved for release: part, lot, traceability, plan, sample, signer and the signed hash', async () => {
    const mgr = await t.signIn('manager');
    const signed = await mgr.post(`/api/signoff/lots/${ids['HG9701-A']}`).send({ password: TEST_PASSWORD, meaning: 'approved' });
    expect(signed.status).toBe(201);
    const hash: string = signed.body.signatures[0].dataHash;
    for (const who of [mgr, await t.signIn('engineer')]) {
      const res = await who.get(`/api/reports/lots/${ids['HG9701-A']}/certificate.pdf`).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      expect(res.headers['content-type']).toBe('application/pdf');
      expect(res.headers['content-disposition']).toMatch(/lot-HG9701-A-certificate\.pdf/);
      const bytes = res.body as Buffer;
      expect([1, 2]).toContain(pdfPageCount(bytes));
      const text = pdfText(bytes).replace(/\s+/g, ' ');
      expect(text).toContain('Certificate of conformance');
      expect(text).toContain(`EMB-COC-HG9701-A-${hash.slice(0, 12).toUpperCase()}`);
      for (const s of [
        'HPD-R100',
        'HG9701-A (1,000 devices)',
        'W12',
        'A77-3',
        'HTRB report plan (version 1)',
        'JESD22-A108; AEC-Q101 test table',
        'Test manager',
        hash,
      ])
        expect(text).toContain(s);
      expect(text).toContain('20 of 20 devices judged, 0 failed, accept number 0');
    }
  });
});
