/**
 * The demo qualifications (issue #22 item 5, server/seed/seed-qualifications.ts): QUAL-001 in
 * progress with its HTRB cells backed by the demo lots' runs, QUAL-002 complete with every cell
 * passed (runs or recorded outside results) or waived, and its lot verdict signed.
 */
import * as fs from 'node:fs';
import { jStat } from 'jstat';
import type { LotDetail } from '../../shared/schemas/analytics';
import { SEED_STEPS } from '../../server/seed/seed';
import type { QualificationDetail } from '../../shared/schemas/qualifications';
import { createTestApp, type TestApp } from '../support/api';
import { pdfText } from '../support/pdf-text';

let t: TestApp;
jest.setTimeout(60_000);
let items: Array<{ id: string; code: string; status: string }>;

beforeAll(async () => {
  t = await createTestApp();
  for (const step of SEED_STEPS) await step.run(t.ctx.ds);
  const eng = await t.signIn('engineer');
  items = (await eng.get('/api/qualifications')).body.items;
});
afterAll(async () => {
  await t.close();
});

const detail = async (code: string): Promise<QualificationDetail> => {
  const eng = await t.signIn('engineer');
  return (await eng.get(`/api/qualifications/${items.find((i) => i.code === code)!.id}`)).body;
};

it('QUAL-001 is in progress: HTRB judged passed on A and incomplete on B (both with a booked run to come), under stress on C; TC and AC not started', async () => {
  const d = await detail('QUAL-001');
  expect(d.status).toBe('in-progress');
  const htrb = d.cells.filter((c) => c.groupKey === 'htrb');
  // HG2611-A and -B also share a booked HTRB run (HTRB-2611-A+1) from the live-runs seed: their cells wait for it.
  expect(htrb.map((c) => `${c.lotCode}:${c.state}:${c.verdict}`)).toEqual([
    'HG2611-A:booked:passed',
    'HG2611-B:booked:incomplete',
    'HG2612-C:under-stress:drifting',
  ]);
  expect(htrb[0].runs.map((r) => r.code)).toEqual(expect.arrayContaining(['HTRB-2611-A', 'HTRB-2611-A-2', 'HTRB-2611-A+1']));
  expect(htrb[0].projectedFinish).not.toBeNull();
  expect(d.cells.filter((c) => c.groupKey === 'tc' || c.groupKey === 'ac').every((c) => c.state === 'not-started')).toBe(true);
  expect(d.cells.find((c) => c.groupKey === 'esd-hbm')!.state).toBe('passed');
});

it('QUAL-002 is complete: runs passed, outside results recorded, IOL waived, the lot verdict signed', async () => {
  const d = await detail('QUAL-002');
  expect(d.status).toBe('complete');
  expect(Object.fromEntries(d.cells.map((c) => [c.groupKey, c.state]))).toEqual({
    'c-life': 'passed',
    'e-htrb': 'passed',
    'e-tc': 'passed',
    'e-iol': 'waived',
    'b-sd': 'passed',
    'e-dpa': 'passed',
  });
  expect(d.cells.find((c) => c.groupKey === 'c-life')!.runs.map((r) => r.code)).toEqual(['HOTL-2606-K']);
  const mgr = await t.signIn('manager');
  const csv = await mgr.get(`/api/qualifications/${d.id}/report.csv`);
  expect(csv.status).toBe(200);
  expect(csv.text).toMatch(/\r\nHG2606-K,Henrik Aldous,manager@harrowgate-lab\.example,[^,]*,Passed,/);
});

it("QUAL-002's group C life run is credited at the junction its plan states, so its FIT is that of a life test (tens of FIT, not 10^5)", async () => {
  const d = await detail('QUAL-002');
  const cell = d.cells.find((c) => c.groupKey === 'c-life')!;
  const mgr = await t.signIn('manager');
  const lot: LotDetail = (await mgr.get(`/api/analytics/lots/${cell.lotId}`)).body;
  const life = lot.plans.find((p) => p.kind === 'hotl')!;
  const fit = life.fit!;
  // The plan's name states its junction; the run's telemetry record (stress segments) puts every device there.
  const statedTj = Number(life.planName.match(/Tj (\d+) °C/)?.[1]);
  expect(statedTj).toBe(145); // 25 °C + θja 62.5 °C/W × 30 V × 64 mA = 145 °C (hand computation, JESD51 θja definition)
  expect(fit.junction.devicesFromTelemetry).toBe(45);
  expect(Math.abs(fit.junction.tjMeanC! - statedTj)).toBeLessThan(0.5);
  // Hand computation: 0 failures in 45 × 1000 h; χ²(0.60; 2) from jstat (reference library);
  // Arrhenius AF = exp(Ea/k · (1/T_use − 1/T_j)) with k = 8.617333e-5 eV/K (CODATA), Ea and T_use from the plan.
  const k = 8.617333262e-5;
  const af = Math.exp((fit.constants.eaEv / k) * (1 / (fit.constants.useC + 273.15) - 1 / (fit.junction.tjMeanC! + 273.15)));
  const fit60 = (jStat.chisquare.inv(0.6, 2) / 2 / (45 * 1000 * af)) * 1e9;
  expect(fit.deviceHours).toBeCloseTo(45_000, 6);
  expect(fit.accelerationFactor).toBeCloseTo(af, 1);
  expect(fit.fit60).toBeCloseTo(fit60, 0);
  expect(fit.fit60).toBeGreaterThan(10);
  expect(fit.fit60).toBeLessThan(1000);
  // The matrix and the lot view give the same figure.
  expect(cell.fit!.fit60).toBe(fit.fit60);
});

it("QUAL-002's PDF report: a PDF of several pages (kept in .data/ with EMBERLOT_KEEP_REPORT=1, to look at with npm run pdf-pages)", async () => {
  const d = await detail('QUAL-002');
  const mgr = await t.signIn('manager');
  const res = await mgr
    .get(`/api/qualifications/${d.id}/report.pdf`)
    .buffer(true)
    .parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
  expect(res.status).toBe(200);
  const pdf: Buffer = res.body;
  expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
  expect((pdf.toString('latin1').match(/\/Type \/Page\b/g) ?? []).length).toBeGreaterThanOrEqual(2);
  // Drift charts per cell: the group C life and group E HTRB runs each charted on their own.
  const flat = pdfText(pdf).replace(/\s+/g, ' ');
  expect(flat).toContain('Group C steady-state operating life: hFE change from time zero (run HOTL-2606-K)');
  expect(flat).toContain('Group E high-temperature reverse bias: ICBO relative to time zero (run HTRB-2606-K)');
  if (process.env.EMBERLOT_KEEP_REPORT === '1') {
    fs.mkdirSync('.data', { recursive: true });
    fs.writeFileSync('.data/qual-002-report.pdf', pdf);
    const q1 = await detail('QUAL-001');
    const r1 = await mgr
      .get(`/api/qualifications/${q1.id}/report.pdf`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    fs.writeFileSync('.data/qual-001-report.pdf', r1.body);
  }
});
