/**
 * The demo's make-up (issue #25 item 3): the in-progress HG2612-C sample lost C0010 and had C0031
 * damaged at 500 h, so its run page proposes a make-up of two fresh devices from the lot, with the
 * earliest rig time, and its lot stays drifting (server/seed/seed-history.ts).
 */
import { RunEntity } from '../../server/db/entities';
import { SEED_STEPS } from '../../server/seed/seed';
import { createTestApp, type TestApp } from '../support/api';

let t: TestApp;

beforeAll(async () => {
  t = await createTestApp();
  for (const step of SEED_STEPS) await step.run(t.ctx.ds);
}, 120_000);
afterAll(async () => {
  await t.close();
});

it('HTRB-2612-C proposes a make-up of 2 from 75 still in the 77-device sample; the other demo runs have none to offer', async () => {
  const eng = await t.signIn('engineer');
  const run = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ code: 'HTRB-2612-C' });
  const res = await eng.get(`/api/runs/${run.id}/make-up`);
  expect(res.status).toBe(200);
  expect(res.body).toMatchObject({ status: 'possible', sampleBookedSize: 77, makeUpSize: 2 });
  expect(res.body.lots).toEqual([
    expect.objectContaining({ lot: expect.objectContaining({ code: 'HG2612-C' }), booked: 77, valid: 75, failures: 0, makeUpSize: 2 }),
  ]);
  expect(res.body.lost.map((d: { serial: string; runCode: string; kind: string }) => [d.serial, d.runCode, d.kind])).toEqual([
    ['C0010', 'HTRB-2612-C', 'removed'],
    ['C0031', 'HTRB-2612-C', 'removed'],
  ]);
  // [pub: binomial success-run, c 0: LTPD = 1 − (1 − CL)^(1/n)] 75 → 3.02 %; the plan's 77 → 2.95 % (REFERENCE §3)
  expect(res.body.lots[0].ltpdNow).toBeCloseTo(1 - 0.1 ** (1 / 75), 9);
  expect(res.body.planLtpd).toBeCloseTo(0.0295, 4);
  expect(res.body.slot).not.toBeNull();
  // The sister lot that passed lost nothing: no make-up.
  const a = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ code: 'HTRB-2611-A' });
  expect((await eng.get(`/api/runs/${a.id}/make-up`)).body).toMatchObject({ status: 'nothing-to-restore', lost: [] });
  // The demo's run over two lots (HG2611-A and -B, booked, not started): both lots are judged on their earlier,
  // finished samples, so this run's devices count towards neither verdict and there is nothing to propose.
  const two = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ code: 'HTRB-2611-A+1' });
  const twoView = (await eng.get(`/api/runs/${two.id}/make-up`)).body;
  expect(twoView.status).toBe('unavailable');
  expect(twoView.lots.map((l: { lot: { code: string }; status: string }) => [l.lot.code, l.status])).toEqual([
    ['HG2611-A', 'unavailable'],
    ['HG2611-B', 'unavailable'],
  ]);
}, 60_000);
