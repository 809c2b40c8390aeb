/**
 * Make-up planning (issue #25 item 3) through the real API and PostgreSQL: a run whose sample lost,
 * excluded or tripped devices gets a proposal (fresh devices from the same lot restoring the plan's
 * sample at the same accept number, shared/verdict/make-up.ts) with the earliest rig time from the
 * booking proposals; booking it adds a run to the same sample (judged as one). Bad input, stale
 * proposals, the wrong role and nothing-to-restore are refused and change nothing.
 */
import {
  AuditLogEntity,
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  SampleEntity,
  StressPlanEntity,
} from '../../server/db/entities';
import { jStat } from 'jstat';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestRig, tableCounts } from '../support/db';
import { htrbPlanBody, postDemoType, postLot, postPlan, serials } from '../support/lab';

let t: TestApp;
const ids: Record<string, string> = {};

/** A 64-socket oven rated 800 V. */
const addRig = (code: string) => insertTestRig(t.ctx.ds, code, { sockets: 64, maxVoltageV: 800, name: `Oven ${code}` });

/** A stressing run of the first `n` devices of a lot, time zero and 168 h read, with what it lost. */
async function historyRun(
  code: string,
  lotId: string,
  n: number,
  extra: {
    removed?: Parameters<typeof insertHistoryRun>[1]['removed'];
    catastrophic?: Parameters<typeof insertHistoryRun>[1]['catastrophic'];
  },
) {
  return t.ctx.ds.transaction(async (m) => {
    const plan = await m.findOneByOrFail(StressPlanEntity, { id: ids.plan });
    const type = await m.findOneByOrFail(DeviceTypeEntity, { id: ids.type });
    const lot = await m.findOneByOrFail(LotEntity, { id: lotId });
    const devices = (await m.find(DeviceEntity, { where: { lotId }, order: { serial: 'ASC' } })).slice(0, n);
    const rig = await m.findOneByOrFail(RigEntity, { id: ids['OV-01'] });
    const run = await insertHistoryRun(m, {
      code,
      plan,
      deviceType: type,
      rig,
      lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
      state: 'stressing',
      startedAt: new Date(Date.now() - 400 * 3600_000),
      stressHours: 200,
      measuredH: [0, 168],
      noise: 0,
      ...extra,
    });
    return { run, devices };
  });
}

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  await t.signIn('operator');
  await t.signIn('manager');
  ids.type = await postDemoType(eng);
  for (const [code, prefix, n] of [
    ['HG2711-A', 'A', 40],
    ['HG2711-B', 'B', 12],
    ['HG2711-C', 'C', 20],
    ['HG2711-D', 'D', 11],
    ['HG2711-E', 'E', 14],
    ['HG2711-F', 'F', 12],
  ] as const) {
    ids[code] = await postLot(eng, { code, deviceTypeId: ids.type, quantity: 1000, serials: serials(prefix, n) });
  }
  // A small HTRB sample keeps the test fast: 10 devices, accept on 0.
  ids.plan = await postPlan(eng, htrbPlanBody(ids.type, { sampleSize: 10, acceptNumber: 0 }));
  // The same with accept number 1, for the run over two lots (an LTPD beyond the c 0 closed form).
  ids.planC1 = await postPlan(
    eng,
    htrbPlanBody(ids.type, { name: 'HTRB 145 °C, 80 % VCBO, 1000 h, accept 1', sampleSize: 10, acceptNumber: 1 }),
  );
  ids['OV-01'] = await addRig('OV-01');
  ids['OV-02'] = await addRig('OV-02');

  // Lot A: A0001 lost and A0002 excluded at 168 h; A0003's socket tripped at 50 h with no disposition yet.
  const a = await historyRun('HTRB-2711-A', ids['HG2711-A'], 10, {
    removed: [
      { serial: 'A0001', atH: 168, kind: 'lost', reason: 'Not in the carrier after unloading' },
      { serial: 'A0002', atH: 168, kind: 'excluded', reason: 'Bent lead found at the 168 h read point' },
    ],
  });
  await t.ctx.ds
    .getRepository(RunSocketEntity)
    .update(
      { runId: a.run.id, deviceId: a.devices[2].id },
      { tripped: true, trippedAt: new Date(Date.now() - 300 * 3600_000), accruedHours: 50, tripReason: 'runaway' },
    );
  ids.runA = a.run.id;
  ids.sampleA = a.run.sampleId!;
  // Lot B: nothing lost.
  ids.runB = (await historyRun('HTRB-2711-B', ids['HG2711-B'], 10, {})).run.id;
  // Lot C: one device open at 168 h (a failure beyond c = 0) and one lost.
  ids.runC = (
    await historyRun('HTRB-2711-C', ids['HG2711-C'], 10, {
      catastrophic: [{ serial: 'C0003', atH: 168, result: 'open' }],
      removed: [{ serial: 'C0001', atH: 168, kind: 'lost', reason: 'Dropped during unloading' }],
    })
  ).run.id;
  // Lot D: 10 of 11 devices stressed, two lost: a make-up needs 2 fresh devices and the lot holds 1.
  ids.runD = (
    await historyRun('HTRB-2711-D', ids['HG2711-D'], 10, {
      removed: [
        { serial: 'D0001', atH: 168, kind: 'lost', reason: 'Not in the carrier after unloading' },
        { serial: 'D0002', atH: 168, kind: 'damaged', reason: 'Lead snapped in the socket' },
      ],
    })
  ).run.id;
});
afterAll(async () => {
  await t.close();
});

/** A stressing run of 10 devices of lot E and 10 of lot F under the accept-1 plan; E lost E0001 and E0002 at 168 h. */
async function twoLotRun() {
  return t.ctx.ds.transaction(async (m) => {
    const plan = await m.findOneByOrFail(StressPlanEntity, { id: ids.planC1 });
    const type = await m.findOneByOrFail(DeviceTypeEntity, { id: ids.type });
    const rig = await m.findOneByOrFail(RigEntity, { id: ids['OV-02'] });
    const lots = [];
    for (const code of ['HG2711-E', 'HG2711-F']) {
      const lot = await m.findOneByOrFail(LotEntity, { id: ids[code] });
      const devices = (await m.find(DeviceEntity, { where: { lotId: lot.id }, order: { serial: 'ASC' } })).slice(0, 10);
      lots.push({ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } });
    }
    return insertHistoryRun(m, {
      code: 'HTRB-2711-EF',
      plan,
      deviceType: type,
      rig,
      lots,
      state: 'stressing',
      startedAt: new Date(Date.now() - 400 * 3600_000),
      stressHours: 200,
      measuredH: [0, 168],
      noise: 0,
      removed: [
        { serial: 'E0001', atH: 168, kind: 'lost', reason: 'Not in the carrier after unloading' },
        { serial: 'E0002', atH: 168, kind: 'damaged', reason: 'Lead snapped in the socket' },
      ],
    });
  });
}

describe('GET /api/runs/:id/make-up', () => {
  it('names what was lost, the LTPD now against the plan, the make-up of 3 and the earliest rig time', async () => {
    const res = await (await t.signIn('operator')).get(`/api/runs/${ids.runA}/make-up`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      runCode: 'HTRB-2711-A',
      sampleId: ids.sampleA,
      plan: { sampleSize: 10, acceptNumber: 0 },
      status: 'possible',
      sampleBookedSize: 10,
      makeUpSize: 3,
      needsOverride: false,
    });
    expect(res.body.lots).toHaveLength(1);
    expect(res.body.lots[0]).toMatchObject({
      lot: { code: 'HG2711-A' },
      status: 'possible',
      booked: 10,
      valid: 7,
      failures: 0,
      lostCount: 3,
      makeUpSize: 3,
      freshInLot: 30,
      noFailureRoom: false,
    });
    expect(res.body.lost.map((d: { serial: string; kind: string }) => [d.serial, d.kind])).toEqual([
      ['A0001', 'removed'],
      ['A0002', 'removed'],
      ['A0003', 'tripped'],
    ]);
    expect(res.body.lost[2].why).toBe('socket tripped at 50 h (runaway); failure, re-seat or exclusion not yet recorded');
    // [pub: binomial success-run, c 0: LTPD = 1 − (1 − CL)^(1/n), CL 90 % (MIL-PRF-19500 LTPD tables)]
    expect(res.body.planLtpd).toBeCloseTo(1 - 0.1 ** (1 / 10), 9); // 20.57 %
    expect(res.body.lots[0].ltpdNow).toBeCloseTo(1 - 0.1 ** (1 / 7), 9); // 28.03 %
    expect(res.body.lots[0].restoredLtpd).toBeCloseTo(1 - 0.1 ** (1 / 10), 9);
    expect(res.body.explanation).toBe(
      'A make-up of 3 fresh devices, judged with the 7 still in the sample, restores 10 devices at accept number 0: LTPD 20.57 % (now 28.03 %).',
    );
    expect(res.body.slot).toMatchObject({ rigCode: expect.stringMatching(/^OV-0[12]$/) });
    expect(Date.parse(res.body.slot.start)).toBeGreaterThan(Date.now() - 60_000);
    expect(res.body.slotProblems).toEqual([]);
  });

  it('a run that lost nothing has nothing to restore', async () => {
    const res = await (await t.signIn('engineer')).get(`/api/runs/${ids.runB}/make-up`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'nothing-to-restore', makeUpSize: 0, lost: [], slot: null });
    expect(res.body.lots).toEqual([expect.objectContaining({ valid: 10, notStarted: 0, makeUpSize: 0, lostCount: 0 })]);
    expect(res.body.explanation).toBe(
      '10 devices are still in the sample; the plan asks for 10, so its LTPD of 20.57 % stands without a make-up.',
    );
  });

  it('a sample already failed (an open device, c 0) is not made up', async () => {
    const res = await (await t.signIn('engineer')).get(`/api/runs/${ids.runC}/make-up`);
    expect(res.body).toMatchObject({ status: 'failed-already', makeUpSize: 0, slot: null });
    expect(res.body.lots[0]).toMatchObject({ status: 'failed-already', failures: 1, valid: 9, makeUpSize: 0 });
  });

  it('a lot without enough fresh devices says so', async () => {
    const res = await (await t.signIn('engineer')).get(`/api/runs/${ids.runD}/make-up`);
    expect(res.body).toMatchObject({ status: 'too-few-fresh', makeUpSize: 0, slot: null });
    expect(res.body.lots[0]).toMatchObject({ valid: 8, freshInLot: 1, makeUpSize: 0 });
    expect(res.body.explanation).toMatch(/^A make-up needs 2 fresh devices from the lot; it holds 1 never stressed\./);
  });

  it('a malformed run id is a 400; an unknown run a 404', async () => {
    const eng = await t.signIn('engineer');
    expect((await eng.get('/api/runs/not-a-run/make-up')).status).toBe(400);
    const missing = await eng.get('/api/runs/00000000-0000-4000-8000-000000000000/make-up');
    expect(missing.status).toBe(404);
  });
});

describe('POST /api/runs/:id/make-up', () => {
  const url = () => `/api/runs/${ids.runA}/make-up`;

  it('bad bodies are refused with the field named; nothing changes', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const noSize = await eng.post(url()).send({ rigId: ids['OV-02'], sampleBookedSize: 10 });
    expect(noSize.status).toBe(400);
    expect(Object.keys(noSize.body.error.fields)).toEqual(['makeUpSize']);
    const badRig = await eng.post(url()).send({ rigId: 'OV-02', makeUpSize: 3, sampleBookedSize: 10 });
    expect(badRig.status).toBe(400);
    expect(badRig.body.error.fields.rigId).toEqual(['Not a valid rig id']);
    const fraction = await eng.post(url()).send({ rigId: ids['OV-02'], makeUpSize: 2.5, sampleBookedSize: 10 });
    expect(fraction.body.error.fields.makeUpSize).toEqual(['Whole devices only']);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('an operator may not book; nothing changes', async () => {
    const op = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const res = await op.post(url()).send({ rigId: ids['OV-02'], makeUpSize: 3, sampleBookedSize: 10 });
    expect(res.status).toBe(403);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('a stale proposal (other size) is refused with 409 and the current numbers; nothing changes', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post(url()).send({ rigId: ids['OV-02'], makeUpSize: 2, sampleBookedSize: 10 });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe(
      'The make-up proposal changed: it now asks for 3 devices with 10 booked in the sample. Reload and book again.',
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('nothing to restore: a POST is refused with the reason; nothing changes', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post(`/api/runs/${ids.runB}/make-up`).send({ rigId: ids['OV-02'], makeUpSize: 1, sampleBookedSize: 10 });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/^No make-up to book for run HTRB-2711-B: 10 devices are still in the sample/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('books the make-up into the same sample in one step, audited; the proposal then has nothing left to restore', async () => {
    const eng = await t.signIn('engineer');
    const proposal = (await eng.get(url())).body;
    const res = await eng.post(url()).send({
      rigId: proposal.slot.rigId,
      start: proposal.slot.start,
      makeUpSize: proposal.makeUpSize,
      sampleBookedSize: proposal.sampleBookedSize,
    });
    expect(res.status).toBe(201);
    expect(res.body.runs).toHaveLength(1);
    const [run] = res.body.runs;
    expect(run).toMatchObject({ state: 'booked', sampleSize: 3 });
    expect(run.sample).toMatchObject({ id: ids.sampleA, plannedSize: 10, bookedSize: 13 });
    expect([...run.sample.runCodes].sort()).toEqual(['HTRB-2711-A', run.code].sort());
    const made = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: run.id });
    expect(made.sampleId).toBe(ids.sampleA);
    expect((await t.ctx.ds.getRepository(SampleEntity).findOneByOrFail({ id: ids.sampleA })).bookedSize).toBe(13);
    const audit = await t.ctx.ds
      .getRepository(AuditLogEntity)
      .findOneByOrFail({ entity: 'sample', entityId: ids.sampleA, action: 'sample.make-up' });
    expect(audit.details).toMatchObject({
      makeUpFor: 'HTRB-2711-A',
      makeUpSize: 3,
      lost: ['A0001', 'A0002', 'A0003'],
      lots: [{ lot: 'HG2711-A', makeUpSize: 3, valid: 7, lost: ['A0001', 'A0002', 'A0003'] }],
      runs: [run.code],
      bookedBefore: 10,
      bookedAfter: 13,
    });
    // The same click again finds the sample grown: nothing left to restore.
    const before = await tableCounts(t.ctx.ds);
    const again = await eng
      .post(url())
      .send({ rigId: proposal.slot.rigId, makeUpSize: proposal.makeUpSize, sampleBookedSize: proposal.sampleBookedSize });
    expect(again.status).toBe(422);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const after = (await eng.get(url())).body;
    expect(after).toMatchObject({ status: 'nothing-to-restore', sampleBookedSize: 13 });
    expect(after.lots[0]).toMatchObject({ booked: 13, valid: 10, notStarted: 3 });
    // Until the make-up is stressed, the LTPD now is the 7 on test's: [pub: binomial success-run, c 0] 1 − 0.1^(1/7).
    expect(after.lots[0].ltpdNow).toBeCloseTo(1 - 0.1 ** (1 / 7), 9);
    expect(after.explanation).toBe(
      'A make-up is booked: with the 3 devices of runs not started yet, 10 devices will be in the sample; the plan asks for 10. Until they are stressed and read, the 7 on test demonstrate an LTPD of 28.03 %.',
    );
  });
});

describe('a run over two lots (HG2711-E lost two devices, HG2711-F none)', () => {
  const url = () => `/api/runs/${ids.runEF}/make-up`;
  beforeAll(async () => {
    const run = await twoLotRun();
    ids.runEF = run.id;
    ids.sampleEF = run.sampleId!;
  });

  it("the verdict counts each lot on its own against the plan's n and c, never pooled", async () => {
    for (const [code, judged] of [
      ['HG2711-E', 8],
      ['HG2711-F', 10],
    ] as const) {
      const j = await t.ctx.services.analytics.lotJudgement(ids[code]);
      const plan = j!.judgement.plans.find((p) => p.runs.some((r) => r.runId === ids.runEF))!;
      expect(plan.sample).toMatchObject({ planned: 10, booked: 10, judged, acceptNumber: 1 });
    }
  });

  it('proposes a make-up for HG2711-E only, restoring its 10 at accept number 1, with the earliest rig time', async () => {
    const res = await (await t.signIn('engineer')).get(url());
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      runCode: 'HTRB-2711-EF',
      sampleId: ids.sampleEF,
      plan: { sampleSize: 10, acceptNumber: 1 },
      status: 'possible',
      sampleBookedSize: 20,
      makeUpSize: 2,
      needsOverride: false,
    });
    expect(res.body.lots.map((l: { lot: { code: string }; status: string }) => [l.lot.code, l.status])).toEqual([
      ['HG2711-E', 'possible'],
      ['HG2711-F', 'nothing-to-restore'],
    ]);
    const [e, f] = res.body.lots;
    expect(e).toMatchObject({ booked: 10, valid: 8, failures: 0, lostCount: 2, makeUpSize: 2, freshInLot: 4, notStarted: 0 });
    expect(f).toMatchObject({ booked: 10, valid: 10, failures: 0, lostCount: 0, makeUpSize: 0, restoredLtpd: null });
    expect(res.body.lost.map((d: { serial: string; lotCode: string; kind: string }) => [d.serial, d.lotCode, d.kind])).toEqual([
      ['E0001', 'HG2711-E', 'removed'],
      ['E0002', 'HG2711-E', 'removed'],
    ]);
    // [pub: REFERENCE A1, exact p_U = BetaInv(CL; c+1, n − c), CL 90 %; values from jstat beta.inv]
    // plan and restored: n 10, c 1 → BetaInv(0.9; 2, 9) = 33.68 %; now: n 8, c 1 → BetaInv(0.9; 2, 7) = 40.6 %.
    expect(res.body.planLtpd).toBeCloseTo(jStat.beta.inv(0.9, 2, 9), 6);
    expect(e.restoredLtpd).toBeCloseTo(jStat.beta.inv(0.9, 2, 9), 6);
    expect(e.ltpdNow).toBeCloseTo(jStat.beta.inv(0.9, 2, 7), 6);
    expect(f.ltpdNow).toBeCloseTo(jStat.beta.inv(0.9, 2, 9), 6);
    expect(e.explanation).toBe(
      `A make-up of 2 fresh devices, judged with the 8 still in the sample, restores 10 devices at accept number 1: LTPD ${(jStat.beta.inv(0.9, 2, 9) * 100).toFixed(2)} % (now ${(jStat.beta.inv(0.9, 2, 7) * 100).toFixed(2)} %).`,
    );
    expect(res.body.explanation).toBe(
      "Run HTRB-2711-EF holds 2 lots; the verdict judges each on its own against the plan's 10 devices at accept number 1. Make-up: 2 fresh devices from lot HG2711-E, each lot in a run of its own. Others — lot HG2711-F: nothing to restore.",
    );
    expect(res.body.slot).toMatchObject({ rigCode: expect.stringMatching(/^OV-0[12]$/) });
    expect(res.body.slotProblems).toEqual([]);
  });

  it('a stale proposal (another lot or size) is refused with 409 and the current numbers; nothing changes', async () => {
    const eng = await t.signIn('engineer');
    const p = (await eng.get(url())).body;
    const before = await tableCounts(t.ctx.ds);
    const body = { rigId: p.slot.rigId, start: p.slot.start, makeUpSize: 2, sampleBookedSize: 20 };
    const otherLot = await eng.post(url()).send({ ...body, lots: [{ lotId: ids['HG2711-F'], makeUpSize: 2 }] });
    expect(otherLot.status).toBe(409);
    expect(otherLot.body.error.message).toBe(
      'The make-up proposal changed: it now asks for 2 devices (2 from lot HG2711-E) with 20 booked in the sample. Reload and book again.',
    );
    const both = await eng.post(url()).send({
      ...body,
      makeUpSize: 3,
      lots: [
        { lotId: ids['HG2711-E'], makeUpSize: 2 },
        { lotId: ids['HG2711-F'], makeUpSize: 1 },
      ],
    });
    expect(both.status).toBe(409);
    const bad = await eng.post(url()).send({ ...body, lots: [{ lotId: 'HG2711-E', makeUpSize: 2 }] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields['lots.0.lotId']).toEqual(['Not a valid lot id']);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('books one run for HG2711-E alone into the same sample in one step, audited; then nothing is left to restore', async () => {
    const eng = await t.signIn('engineer');
    const p = (await eng.get(url())).body;
    const res = await eng.post(url()).send({
      rigId: p.slot.rigId,
      start: p.slot.start,
      makeUpSize: p.makeUpSize,
      sampleBookedSize: p.sampleBookedSize,
      lots: [{ lotId: ids['HG2711-E'], makeUpSize: 2 }],
    });
    expect(res.status).toBe(201);
    expect(res.body.runs).toHaveLength(1);
    const [run] = res.body.runs;
    expect(run).toMatchObject({ state: 'booked', sampleSize: 2 });
    expect(run.sample).toMatchObject({ id: ids.sampleEF, bookedSize: 22 });
    // Its sockets take only HG2711-E's devices: the run is booked for that lot alone.
    expect((await t.ctx.ds.getRepository(RunLotEntity).findBy({ runId: run.id })).map((l) => l.lotId)).toEqual([ids['HG2711-E']]);
    const audit = await t.ctx.ds
      .getRepository(AuditLogEntity)
      .findOneByOrFail({ entity: 'sample', entityId: ids.sampleEF, action: 'sample.make-up' });
    expect(audit.details).toMatchObject({
      makeUpFor: 'HTRB-2711-EF',
      makeUpSize: 2,
      lots: [{ lot: 'HG2711-E', makeUpSize: 2, valid: 8, failures: 0, lost: ['E0001', 'E0002'] }],
      runs: [run.code],
      bookedBefore: 20,
      bookedAfter: 22,
    });
    const after = (await eng.get(url())).body;
    expect(after).toMatchObject({ status: 'nothing-to-restore', sampleBookedSize: 22, makeUpSize: 0 });
    expect(after.lots[0]).toMatchObject({ lot: { code: 'HG2711-E' }, booked: 12, valid: 10, notStarted: 2 });
    expect(after.lots[1]).toMatchObject({ lot: { code: 'HG2711-F' }, booked: 10, valid: 10, notStarted: 0 });
    // The 8 of HG2711-E on test still demonstrate BetaInv(0.9; 2, 7) until the make-up is stressed [REFERENCE A1; jstat beta.inv].
    expect(after.lots[0].ltpdNow).toBeCloseTo(jStat.beta.inv(0.9, 2, 7), 6);
  });
});
