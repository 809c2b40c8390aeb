/**
 * /api/replan: proposals for the booked runs of a rig that went offline or into maintenance, who may
 * accept one, a stale proposal refused with nothing changed, and the in-place option once the rig
 * is back. The rig's offline/online switch is driven through the re-planner's entry point here;
 * tests/broker/replan-e2e.test.ts drives it with a simulated rig over MQTT.
 */
import { AuditLogEntity, ReplanProposalEntity, RigEntity, RunEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { runDurationMs } from '../../shared/scheduling';
import type { ReplanProposal } from '../../shared/schemas/replan';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
const ids: Record<string, string> = {};
const H = 3_600_000;
const DAY = 24 * H;
const demo = (pn: string) => DEMO_DEVICE_TYPES.find((d) => d.partNumber === pn)!;
const serials = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${String(i + 1).padStart(4, '0')}`);
// The plan: 100 h, read points at 0 and 100 h → 100 h + 2 h heating allowance = 102 h on the rig.
const RUN_MS = runDurationMs({ durationH: 100, readPointsH: [0, 100] });
const T0 = Math.ceil((Date.now() + 60 * H) / 60_000) * 60_000;
const DUE_A = T0 + RUN_MS + 10 * H;

async function addRig(code: string, over: Partial<RigEntity> = {}): Promise<string> {
  const r = await t.ctx.ds.getRepository(RigEntity).save({
    code,
    name: `Oven ${code}`,
    socketCount: 16,
    maxTempC: 200,
    maxVoltageV: 800,
    humidityCapable: false,
    maxHumidityPct: null,
    mqttUsername: `rig-${code.toLowerCase()}`,
    mqttSecretHash: 'x',
    credentialsIssuedAt: new Date(),
    online: true,
    calibrationDueAt: new Date(Date.now() + 365 * DAY),
    ...over,
  });
  return r.id;
}

const setOnline = (code: string, online: boolean) => t.ctx.ds.getRepository(RigEntity).update({ code }, { online });
const runOf = (id: string) => t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id });
const open = async (role: 'manager' | 'engineer' = 'manager'): Promise<ReplanProposal[]> => {
  const res = await (await t.signIn(role)).get('/api/replan?state=open');
  expect(res.status).toBe(200);
  return res.body.items;
};

beforeAll(async () => {
  // A real-time stress clock (1 stress hour per wall hour), as on a real rig.
  t = await createTestApp({ clockRate: 1 / 3600 });
  const eng = await t.signIn('engineer');
  const dt = await eng.post('/api/device-types').send(demo('HPD-2N140'));
  expect(dt.status).toBe(201);
  for (const [code, prefix] of [
    ['HG2701-A', 'A'],
    ['HG2702-B', 'B'],
    ['HG2703-C', 'C'],
  ]) {
    const res = await eng.post('/api/lots').send({ code, deviceTypeId: dt.body.id, quantity: 500, serials: serials(prefix, 8) });
    expect(res.status).toBe(201);
    ids[code] = res.body.id;
  }
  const plan = async (name: string, chamberC: number) => {
    const res = await eng.post('/api/plans').send({
      name,
      kind: 'htrb',
      deviceTypeId: dt.body.id,
      chamberC,
      bias: { vcbV: 112 },
      durationH: 100,
      readPointsH: [0, 100],
      sampleSize: 8,
      acceptNumber: 0,
      criteria: {},
    });
    expect(res.status).toBe(201);
    return res.body.id as string;
  };
  ids.plan = await plan('HTRB 145 °C, 100 h', 145);
  ids.cool = await plan('HTRB 125 °C, 100 h', 125);
  ids['OV-11'] = await addRig('OV-11');
  ids['OV-12'] = await addRig('OV-12');
  // Refused as targets: calibration ran out; too cool for the plan.
  ids['OV-13'] = await addRig('OV-13', { calibrationDueAt: new Date(Date.now() - 10 * DAY) });
  ids['OV-14'] = await addRig('OV-14', { maxTempC: 130 });
  const book = async (lot: string, startMs: number, dueAt?: number) => {
    const res = await eng.post('/api/runs').send({
      planId: ids.plan,
      lotIds: [ids[lot]],
      sampleSize: 8,
      rigId: ids['OV-11'],
      start: new Date(startMs).toISOString(),
      ...(dueAt ? { dueAt: new Date(dueAt).toISOString() } : {}),
    });
    expect(res.status).toBe(201);
    return res.body.id as string;
  };
  // Run A is due 10 h after its booked finish; run B has no due date.
  ids.runA = await book('HG2701-A', T0, DUE_A);
  ids.runB = await book('HG2702-B', T0 + 10 * DAY);
});

afterAll(async () => {
  await t?.close();
});

describe('a rig goes offline', () => {
  it('re-proposes each booked run on a rig that can take it, with the delay to its due date (or booked finish)', async () => {
    await setOnline('OV-11', false);
    const n = await t.ctx.services.replan.proposeForRig(ids['OV-11'], { kind: 'offline', why: 'Oven OV-11 went offline' });
    expect(n).toBe(2);
    const items = await open();
    const a = items.filter((p) => p.runId === ids.runA);
    // Only OV-12 qualifies: OV-13's calibration ran out, OV-14 reaches 130 °C (the plan needs 145 °C or more).
    expect(a).toHaveLength(1);
    expect(a[0]).toMatchObject({
      kind: 'move',
      state: 'open',
      runCode: 'HTRB-2701-A',
      fromRigCode: 'OV-11',
      toRigCode: 'OV-12',
      reason: 'Oven OV-11 went offline',
      startAt: new Date(T0).toISOString(),
      endAt: new Date(T0 + RUN_MS).toISOString(),
      // 10 h before its due date
      delayBasis: 'due-date',
      delayH: -10,
      dueAt: new Date(DUE_A).toISOString(),
    });
    // Run B starts 10 days later on OV-12 too (nothing in its way there).
    const b = items.filter((p) => p.runId === ids.runB);
    expect(b.map((p) => [p.kind, p.toRigCode, p.delayBasis, p.delayH])).toEqual([['move', 'OV-12', 'booked-finish', 0]]);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findBy({ action: 'run.replan-proposed', entityId: ids.runA });
    expect(audit).toHaveLength(1);
    expect(audit[0].reason).toBe('Oven OV-11 went offline');
  });

  it('shows the delay when the other rig is busy first', async () => {
    // Another run at other conditions holds OV-12 for the first 50 h of run A's window.
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/runs').send({
      planId: ids.cool,
      lotIds: [ids['HG2703-C']],
      sampleSize: 8,
      rigId: ids['OV-12'],
      start: new Date(T0 - 52 * H).toISOString(),
    });
    expect(res.status).toBe(201);
    ids.blocker = res.body.id;
    await t.ctx.services.replan.proposeForRig(ids['OV-11'], { kind: 'offline', why: 'Oven OV-11 went offline (again)' });
    const [a] = (await open()).filter((p) => p.runId === ids.runA);
    // The blocker ends at T0 − 52 h + 102 h = T0 + 50 h: run A starts then, 50 h behind its booking:
    // 40 h past its due date.
    expect(a).toMatchObject({ toRigCode: 'OV-12', startAt: new Date(T0 + 50 * H).toISOString(), delayBasis: 'due-date', delayH: 40 });
    await t.ctx.ds.getRepository(RunEntity).delete({ id: ids.blocker });
  });
});

describe('accepting a proposal', () => {
  it('refuses an operator and an admin, and changes nothing', async () => {
    const [a] = (await open()).filter((p) => p.runId === ids.runA);
    for (const role of ['operator', 'admin'] as const) await t.signIn(role); // sign-ins are audited too
    const before = await tableCounts(t.ctx.ds);
    for (const role of ['operator', 'admin'] as const) {
      const res = await (await t.signIn(role)).post(`/api/replan/${a.id}/accept`).send({});
      expect(res.status).toBe(403);
    }
    expect((await (await t.signIn('operator')).get('/api/replan')).status).toBe(403);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await runOf(ids.runA)).rigId).toBe(ids['OV-11']);
  });

  it('refuses bad input with the field named', async () => {
    const mgr = await t.signIn('manager');
    const bad = await mgr.post('/api/replan/not-an-id/accept').send({});
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.id).toEqual(['Not a valid re-plan proposal id']);
    const [a] = (await open()).filter((p) => p.runId === ids.runA);
    const extra = await mgr.post(`/api/replan/${a.id}/accept`).send({ rigId: ids['OV-13'] });
    expect(extra.status).toBe(400);
  });

  it('refuses a proposal a newer one replaced, with nothing changed', async () => {
    const old = await t.ctx.ds.getRepository(ReplanProposalEntity).findOneByOrFail({ runId: ids.runA, state: 'superseded' });
    const before = await tableCounts(t.ctx.ds);
    const res = await (await t.signIn('manager')).post(`/api/replan/${old.id}/accept`).send({});
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe(
      'This proposal for HTRB-2701-A was replaced by a newer one; nothing was changed. Reload the re-plan list.',
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await runOf(ids.runA)).rigId).toBe(ids['OV-11']);
  });

  it('refuses a proposal whose window is no longer free, with nothing changed', async () => {
    const [a] = (await open()).filter((p) => p.runId === ids.runA);
    // OV-12 gets a 125 °C run across the proposed window (from T0 + 50 h) after the proposal was made.
    const res = await (await t.signIn('engineer')).post('/api/runs').send({
      planId: ids.cool,
      lotIds: [ids['HG2703-C']],
      sampleSize: 8,
      rigId: ids['OV-12'],
      start: new Date(T0 - 40 * H).toISOString(),
    });
    expect(res.status).toBe(201);
    const before = await tableCounts(t.ctx.ds);
    const refused = await (await t.signIn('manager')).post(`/api/replan/${a.id}/accept`).send({});
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(
      /^OV-12 can no longer take HTRB-2701-A at .+: Oven OV-12 runs HTRB-2703-C at [\d.]+ °C until .+; the plan needs [\d.]+ °C\. Nothing was changed; ask for a new re-plan\.$/,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await runOf(ids.runA)).rigId).toBe(ids['OV-11']);
    await t.ctx.ds.getRepository(RunEntity).delete({ id: res.body.id });
  });

  it('refuses a proposal for a run that changed since', async () => {
    const [b] = (await open()).filter((p) => p.runId === ids.runB);
    await t.ctx.ds.query('UPDATE runs SET row_version = row_version + 1 WHERE id = $1', [ids.runB]);
    const before = await tableCounts(t.ctx.ds);
    const res = await (await t.signIn('engineer')).post(`/api/replan/${b.id}/accept`).send({});
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe(
      'Run HTRB-2702-B changed since this proposal was made; nothing was changed. Reload the re-plan list.',
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('a manager accepts: the run is booked on the other rig, audited, and the proposal cannot be accepted twice', async () => {
    const [a] = (await open()).filter((p) => p.runId === ids.runA);
    const mgr = await t.signIn('manager');
    const res = await mgr.post(`/api/replan/${a.id}/accept`).send({ note: 'OV-11 waits for a new controller board.' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ id: a.id, state: 'accepted', toRigCode: 'OV-12', decidedBy: 'Test manager' });
    const run = await runOf(ids.runA);
    expect(run.state).toBe('booked');
    expect(run.rigId).toBe(ids['OV-12']);
    expect(run.scheduledStart!.getTime()).toBe(Date.parse(a.startAt));
    expect(run.scheduledEnd!.getTime() - run.scheduledStart!.getTime()).toBe(RUN_MS);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'run.replan', entityId: ids.runA });
    expect(audit.actor).toBe('manager@test.example');
    expect(audit.reason).toBe('OV-11 waits for a new controller board.');
    expect(audit.details).toMatchObject({ proposalId: a.id, kind: 'move', toRig: 'OV-12', trigger: 'Oven OV-11 went offline (again)' });
    expect((await open()).filter((p) => p.runId === ids.runA)).toEqual([]);
    const again = await mgr.post(`/api/replan/${a.id}/accept`).send({});
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe('This proposal for HTRB-2701-A was already accepted; nothing was changed.');
  });
});

describe('the rig comes back, or goes into maintenance', () => {
  it('back online: the runs still waiting get an in-place option beside the moves', async () => {
    await setOnline('OV-11', true);
    const n = await t.ctx.services.replan.proposeForRig(ids['OV-11'], { kind: 'online', why: 'Oven OV-11 is back online' });
    expect(n).toBe(1); // run B only: run A has moved
    const b = (await open()).filter((p) => p.runId === ids.runB);
    const inPlace = b.find((p) => p.kind === 'in-place')!;
    expect(inPlace).toMatchObject({ toRigCode: 'OV-11', startAt: new Date(T0 + 10 * DAY).toISOString(), delayH: 0 });
    // Run B's proposals were re-made with its current row version: accepting in place works.
    const res = await (await t.signIn('engineer')).post(`/api/replan/${inPlace.id}/accept`).send({});
    expect(res.status).toBe(200);
    expect((await runOf(ids.runB)).rigId).toBe(ids['OV-11']);
  });

  it('a running run on a lost rig waits in place: listed with what is credited, never proposed', async () => {
    const m = t.ctx.ds.manager;
    const running = await m.save(
      m.create(RunEntity, {
        code: 'HTRB-2703-C',
        planId: ids.plan,
        rigId: ids['OV-13'],
        state: 'stressing',
        sampleSize: 8,
        stateChangedAt: new Date(),
        nextReadPoint: 1,
        stressHours: 42.5,
        startedAt: new Date(Date.now() - 50 * H),
        scheduledStart: new Date(Date.now() - 50 * H),
        scheduledEnd: new Date(Date.now() + 52 * H),
      }),
    );
    await setOnline('OV-13', false);
    expect(await t.ctx.services.replan.proposeForRig(ids['OV-13'], { kind: 'offline', why: 'Oven OV-13 went offline' })).toBe(0);
    const res = await (await t.signIn('engineer')).get('/api/replan');
    expect(res.body.held).toEqual([
      {
        runId: running.id,
        runCode: 'HTRB-2703-C',
        rigCode: 'OV-13',
        state: 'stressing',
        stressHours: 42.5,
        note: "OV-13 is offline: the run waits in place with its devices. Only hours the rig's stored samples show are credited; a silent gap credits nothing. A command the rig cannot confirm puts the run into fault.",
      },
    ]);
    expect(res.body.items.filter((p: ReplanProposal) => p.runId === running.id)).toEqual([]);
    await m.delete(RunEntity, { id: running.id });
  });

  it('maintenance over a booking: in place after the window, or on another rig', async () => {
    const admin = await t.signIn('admin');
    // OV-12 (now holding run A from T0 + 50 h for 102 h) goes into maintenance for 3 days from T0.
    const runA = await runOf(ids.runA);
    const res = await admin
      .post('/api/rigs/OV-12/maintenance')
      .send({ startsAt: new Date(T0).toISOString(), endsAt: new Date(T0 + 3 * DAY).toISOString(), reason: 'Heater replacement' });
    expect(res.status).toBe(201);
    const a = (await open()).filter((p) => p.runId === ids.runA);
    expect(a.map((p) => [p.kind, p.toRigCode]).sort()).toEqual([
      ['in-place', 'OV-12'],
      ['move', 'OV-11'],
    ]);
    const inPlace = a.find((p) => p.kind === 'in-place')!;
    // After the window: T0 + 72 h, 22 h after its booked start (T0 + 50 h) → it finishes at
    // T0 + 174 h, 62 h past its due date (T0 + 112 h).
    expect(inPlace.startAt).toBe(new Date(T0 + 3 * DAY).toISOString());
    expect(runA.scheduledStart!.getTime()).toBe(T0 + 50 * H);
    expect(inPlace.delayBasis).toBe('due-date');
    expect(inPlace.delayH).toBeCloseTo(62, 9);
    expect(inPlace.reason).toMatch(/^Oven OV-12 is in maintenance from .+ to .+ \(Heater replacement\)$/);
  });
});
