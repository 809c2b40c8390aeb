/**
 * Power-cycling credit from the cycles each socket counted (run_sockets.cycles_done and the smallest
 * junction swing last reported): a Coffin–Manson FIT of its own — not from hours, not pooled. On the
 * demo's lot HG2605-H, whose plan view is run IOL-2605-H (20 devices), given 10 credited hours and 150
 * counted cycles per socket. Check values: Coffin–Manson AF = (ΔTj,test/ΔTj,use)^m (JEDEC JEP122,
 * REFERENCE A4); the FIT bound χ²(CL; 2r+2)/(2·T)·10⁹ (JESD85) with the quantile from jstat.
 */
import { jStat } from 'jstat';
import { SEED_STEPS } from '../../server/seed/seed';
import { createTestApp, type TestApp } from '../support/api';

let t: TestApp;
let lotId: string;
jest.setTimeout(60_000);
const RUN = `(SELECT id FROM runs WHERE code = 'IOL-2605-H')`;

beforeAll(async () => {
  t = await createTestApp();
  for (const step of SEED_STEPS) await step.run(t.ctx.ds);
  const [row] = await t.ctx.ds.query(
    `SELECT l.id FROM run_sockets rs JOIN devices d ON d.id = rs.device_id JOIN lots l ON l.id = d.lot_id WHERE rs.run_id = ${RUN} LIMIT 1`,
  );
  lotId = row.id;
});
afterAll(async () => {
  await t.close();
});

const lotFit = async () => {
  const mgr = await t.signIn('manager');
  const res = await mgr.get(`/api/analytics/lots/${lotId}`);
  expect(res.status).toBe(200);
  return res.body;
};

it('cycles counted without a recorded swing give no cycling FIT, and say why', async () => {
  // As the run engine's accrual does: the sockets' counts with the run's own (which versions the analysis).
  await t.ctx.ds.query(`UPDATE run_sockets SET accrued_hours = 10, cycles_done = 150, last_d_tj_low_c = NULL WHERE run_id = ${RUN}`);
  await t.ctx.ds.query(`UPDATE runs SET cycles_done = 150 WHERE id = ${RUN}`);
  const body = await lotFit();
  expect(body.fit).toBeNull();
  expect(body.plans[0].fitUnavailable).toMatch(/not recorded for every device/);
});

it('with each socket’s cycles and smallest swing, the FIT is Coffin–Manson’s', async () => {
  await t.ctx.ds.query(`UPDATE run_sockets SET last_d_tj_low_c = 104, last_d_tj_high_c = 108 WHERE run_id = ${RUN}`);
  await t.ctx.ds.query(`UPDATE runs SET cycles_done = 151 WHERE id = ${RUN}`);
  const f = (await lotFit()).fit;
  expect(f.mechanism).toBe('cycling');
  // 20 devices × 150 cycles × (104 K / 50 K)^2, each cycle a field day (24 h): the use swing 50 K,
  // m = 2 and one cycle a day are Emberlot's stated assumptions (from memory; listed with the FIT).
  const eqHours = 20 * 150 * (104 / 50) ** 2 * 24;
  expect(f.equivalentDeviceHours).toBeCloseTo(eqHours, 3);
  expect(f.failures).toBe(0);
  expect(f.fit60).toBeCloseTo((jStat.chisquare.inv(0.6, 2) / (2 * eqHours)) * 1e9, 6);
});
