/**
 * The calendar: run requests with a due date and a priority, and proposals that booking accepts
 * (one sharing rule for both, shared/scheduling/sharing.ts).
 */
import fc from 'fast-check';
import { AuditLogEntity, RigEntity, RunEntity } from '../../server/db/entities';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestRig, tableCounts } from '../support/db';
import { htrbPlanBody, postDemoType, postLot, postPlan, serials } from '../support/lab';

let t: TestApp;
let clock = Date.UTC(2026, 11, 1, 8, 0);
const ids: Record<string, string> = {};
const SHORT = { reason: 'Test fixture: a short sample on purpose' };

/** A 64-socket oven rated 800 V. */
const addRig = (code: string) => insertTestRig(t.ctx.ds, code, { sockets: 64, maxVoltageV: 800, name: `Oven ${code}` });

beforeAll(async () => {
  t = await createTestApp({}, { now: () => new Date(clock) });
  const eng = await t.signIn('engineer');
  ids.type = await postDemoType(eng);
  for (const [code, prefix] of [
    ['HG2611-A', 'A'],
    ['HG2612-C', 'C'],
  ]) {
    ids[code] = await postLot(eng, { code, deviceTypeId: ids.type, quantity: 2400, serials: serials(prefix, 80) });
  }
  ids.plan = await postPlan(eng, htrbPlanBody(ids.type, { sampleSize: 45, acceptNumber: 0 }));
  ids.coolerPlan = await postPlan(
    eng,
    htrbPlanBody(ids.type, {
      name: 'HTRB 125 °C, 80 % VCBO, 500 h',
      chamberC: 125,
      durationH: 500,
      readPointsH: [0, 500],
      sampleSize: 45,
      acceptNumber: 0,
    }),
  );
  ids['OV-02'] = await addRig('OV-02');
});
afterAll(async () => {
  await t.close();
});

const H = () => 1000 / t.ctx.config.clockRate; // wall ms per clock hour of this server
const iso = (ms: number) => new Date(ms).toISOString();
const book = async (over: Record<string, unknown>) =>
  (await t.signIn('engineer')).post('/api/runs').send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 45, ...over });
async function clearBookings() {
  await t.ctx.ds.query(`DELETE FROM runs WHERE state = 'booked'`);
}

describe('a request carries a due date and a priority', () => {
  afterEach(clearBookings);

  it('booking stores both and the run shows them; proposals say how late each option ends', async () => {
    const eng = await t.signIn('engineer');
    const dueAt = iso(clock + 900 * H());
    const p = await eng
      .post('/api/runs/proposals')
      .send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 45, dueAt, priority: 3 });
    expect(p.status).toBe(200);
    // 1000 h + two 24 h holds + 2 h heating = 1050 h from now; due at 900 h → 150 h late.
    expect(p.body.options[0]).toMatchObject({ rigCode: 'OV-02', lateH: 150 });
    const b = await book({ dueAt, priority: 3, rigId: ids['OV-02'] });
    expect(b.status).toBe(201);
    expect(b.body).toMatchObject({ dueAt, priority: 3 });
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ entityId: b.body.id, action: 'run.book' });
    expect(audit.details).toMatchObject({ dueAt, priority: 3 });
    const tl = await eng.get('/api/runs/timeline');
    const bar = tl.body.rows.find((r: { code: string }) => r.code === 'OV-02').bars.find((x: { runId: string }) => x.runId === b.body.id);
    expect(bar).toMatchObject({ dueAt, priority: 3, lateH: 150 });
  });

  it('without them: normal priority (2), no due date, never late', async () => {
    const b = await book({ rigId: ids['OV-02'] });
    expect(b.status).toBe(201);
    expect(b.body).toMatchObject({ dueAt: null, priority: 2 });
  });

  it.each([
    [{ priority: 5 }, 'Priority is a whole number from 1 (low) to 4 (urgent)'],
    [{ priority: 2.5 }, 'Priority is a whole number from 1 (low) to 4 (urgent)'],
    [{ priority: '3' }, 'Priority is a whole number from 1 (low) to 4 (urgent)'],
    [{ dueAt: 'next friday' }, 'Give a date and time (ISO 8601)'],
  ])('refuses %j with a clear error and changes nothing', async (bad, message) => {
    const before = await tableCounts(t.ctx.ds);
    const res = await book({ rigId: ids['OV-02'], ...bad });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).toContain(message);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses a due date already past (422) and changes nothing', async () => {
    const before = await tableCounts(t.ctx.ds);
    const res = await book({ rigId: ids['OV-02'], dueAt: iso(clock - 60_000) });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(
      /^The due date \d{4}-\d\d-\d\d \d\d:\d\d UTC has already passed; give a date after now or leave it empty\.$/,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });
});

describe('the calendar: booked runs ordered by priority-weighted lateness', () => {
  afterEach(clearBookings);

  it('puts the urgent run that is due first ahead of a low-priority one booked earlier; accepting moves both, audited', async () => {
    // One oven, 64 sockets: two runs of 45 cannot share it, so one waits for the other.
    const low = await book({ rigId: ids['OV-02'], priority: 1, dueAt: iso(clock + 5000 * H()) });
    expect(low.status).toBe(201);
    const urgent = await book({ rigId: ids['OV-02'], lotIds: [ids['HG2612-C']], priority: 4, dueAt: iso(clock + 1100 * H()) });
    expect(urgent.status).toBe(201);
    expect(Date.parse(urgent.body.scheduledStart)).toBe(Date.parse(low.body.scheduledEnd)); // behind the first

    const mgr = await t.signIn('manager');
    const p = await mgr.get('/api/runs/calendar');
    expect(p.status).toBe(200);
    expect(p.body.method).toBe('exact');
    // As booked: the urgent run ends at 2 × 1050 h, due at 1100 h → 1000 h late × weight 8 = 8000.
    expect(p.body.currentWeightedLateH).toBe(8000);
    // Proposed: urgent first (ends at 1050 h, on time), the low one after it (ends at 2100 h, due 5000 h).
    expect(p.body.proposedWeightedLateH).toBe(0);
    const byCode = Object.fromEntries(p.body.runs.map((r: { code: string }) => [r.code, r]));
    expect(byCode[urgent.body.code]).toMatchObject({
      moved: true,
      priority: 4,
      proposed: { rigCode: 'OV-02', lateH: 0 },
      current: { lateH: 1000 },
    });
    expect(Date.parse(byCode[low.body.code].proposed.start)).toBe(Date.parse(byCode[urgent.body.code].proposed.end));
    // Both bookings keep the sharing rule as they stand: they move only for lateness.
    expect(p.body.runs.map((r: { currentConflicts: string[] }) => r.currentConflicts)).toEqual([[], []]);

    const moves = p.body.runs.map((r: { runId: string; rowVersion: number; proposed: { rigId: string; start: string } }) => ({
      runId: r.runId,
      rowVersion: r.rowVersion,
      rigId: r.proposed.rigId,
      start: r.proposed.start,
    }));
    const applied = await mgr.post('/api/runs/calendar').send({ moves });
    expect(applied.status).toBe(200);
    expect(applied.body.moved).toBe(2);
    const u = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: urgent.body.id });
    expect(u.scheduledStart!.toISOString()).toBe(byCode[urgent.body.code].proposed.start);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).find({ where: { action: 'run.reschedule' } });
    expect(audit.map((a) => a.entityId).sort()).toEqual([low.body.id, urgent.body.id].sort());
    const after = await mgr.get('/api/runs/calendar');
    expect(after.body.currentWeightedLateH).toBe(0);
    expect(after.body.runs.every((r: { moved: boolean }) => !r.moved)).toBe(true);
  });

  it('a stale proposal (a run changed since) is refused with a clear error and nothing moves', async () => {
    const low = await book({ rigId: ids['OV-02'], priority: 1 });
    const urgent = await book({ rigId: ids['OV-02'], lotIds: [ids['HG2612-C']], priority: 4, dueAt: iso(clock + 1100 * H()) });
    const mgr = await t.signIn('manager');
    const p = await mgr.get('/api/runs/calendar');
    const moves = p.body.runs.map((r: { runId: string; rowVersion: number; proposed: { rigId: string; start: string } }) => ({
      runId: r.runId,
      rowVersion: r.rowVersion,
      rigId: r.proposed.rigId,
      start: r.proposed.start,
    }));
    await t.ctx.ds.query(`UPDATE runs SET row_version = row_version + 1 WHERE id = $1`, [low.body.id]);
    const before = await tableCounts(t.ctx.ds);
    const windows = await t.ctx.ds.query(`SELECT id, rig_id, scheduled_start FROM runs ORDER BY id`);
    const res = await mgr.post('/api/runs/calendar').send({ moves });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe(
      `Run ${low.body.code} changed since the proposal (version ${low.body.rowVersion}, now ${low.body.rowVersion + 1}). Ask for a new proposal.`,
    );
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect(await t.ctx.ds.query(`SELECT id, rig_id, scheduled_start FROM runs ORDER BY id`)).toEqual(windows);
    void urgent;
  });

  it('a move the booking rule refuses (two runs of 45 at once on 64 sockets) is refused whole', async () => {
    const a = await book({ rigId: ids['OV-02'] });
    const b = await book({ rigId: ids['OV-02'], lotIds: [ids['HG2612-C']] });
    const before = await t.ctx.ds.query(`SELECT id, rig_id, scheduled_start FROM runs ORDER BY id`);
    const res = await (await t.signIn('manager')).post('/api/runs/calendar').send({
      moves: [{ runId: b.body.id, rowVersion: b.body.rowVersion, rigId: ids['OV-02'], start: a.body.scheduledStart }],
    });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain(`Run ${b.body.code} cannot move to OV-02 at `);
    expect(res.body.error.message).toContain(`has 19 of 64 sockets free until`);
    expect(await t.ctx.ds.query(`SELECT id, rig_id, scheduled_start FROM runs ORDER BY id`)).toEqual(before);
  });

  it('roles: operators may not see or accept the calendar proposal; bad bodies are refused', async () => {
    const op = await t.signIn('operator');
    expect((await op.get('/api/runs/calendar')).status).toBe(403);
    const mgr = await t.signIn('manager');
    const res = await mgr.post('/api/runs/calendar').send({ moves: [] });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).toContain('Choose at least one run to move');
  });
});

describe('one sharing rule: every proposal the proposer returns is accepted by the booking path', () => {
  afterEach(clearBookings);

  it('generated fleets: rigs of 16–64 sockets at two temperatures, runs already booked, then each option booked for real', async () => {
    const eng = await t.signIn('engineer');
    const rigIds = [ids['OV-02'], await addRig('OV-07'), await addRig('OV-08')];
    let booked = 0;
    await fc.assert(
      fc.asyncProperty(
        fc.record({
          rigs: fc.array(fc.record({ sockets: fc.constantFrom(16, 32, 48, 64), maxTempC: fc.constantFrom(140, 200) }), {
            minLength: 3,
            maxLength: 3,
          }),
          ahead: fc.array(fc.record({ rig: fc.nat(2), cooler: fc.boolean(), size: fc.constantFrom(8, 16, 24, 45), lot: fc.boolean() }), {
            maxLength: 4,
          }),
          request: fc.record({ cooler: fc.boolean(), size: fc.constantFrom(8, 16, 24, 45) }),
          waitS: fc.integer({ min: 0, max: 20 }),
        }),
        async (g) => {
          await clearBookings();
          for (const [k, id] of rigIds.entries()) {
            await t.ctx.ds.getRepository(RigEntity).update({ id }, { socketCount: g.rigs[k].sockets, maxTempC: g.rigs[k].maxTempC });
          }
          for (const a of g.ahead) {
            await book({
              planId: a.cooler ? ids.coolerPlan : ids.plan,
              lotIds: [ids[a.lot ? 'HG2611-A' : 'HG2612-C']],
              sampleSize: a.size,
              rigId: rigIds[a.rig],
              deviation: a.size < 45 ? SHORT : undefined,
            });
            clock += 1000; // an overdue booking's window slides with the clock
          }
          const req = { planId: g.request.cooler ? ids.coolerPlan : ids.plan, lotIds: [ids['HG2612-C']], sampleSize: g.request.size };
          const p = await eng.post('/api/runs/proposals').send(req);
          expect(p.status).toBe(200);
          clock += g.waitS * 1000; // the engineer reads the proposals for a while
          for (const o of p.body.options) {
            const res = await book({ ...req, rigId: o.rigId, start: o.start, deviation: g.request.size < 45 ? SHORT : undefined });
            if (res.status !== 201) throw new Error(`${o.rigCode} at ${o.start}: ${res.status} ${JSON.stringify(res.body)}`);
            booked++;
            await t.ctx.ds.query(`DELETE FROM runs WHERE id = $1`, [res.body.id]);
          }
        },
      ),
      { numRuns: 25, seed: 2026 },
    );
    expect(booked).toBeGreaterThan(25);
  }, 180_000); // a property over many cases: slow on a shared machine, not a timed test
});
