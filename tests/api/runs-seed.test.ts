/**
 * The demo seed's live runs: one under stress, one heating, one being loaded, one booked, each
 * passing the booking constraint checks on its rig; the scheduler picks the live ones up at once.
 */
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import { IsNull } from 'typeorm';
import { RunEntity, RunSocketEntity } from '../../server/db/entities';
import { loadSampleEvidence } from '../../server/modules/evidence/evidence.data';
import type { SampleEvidence } from '../../shared/schemas/evidence';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { SEED_STEPS } from '../../server/seed/seed';
import { createTestDb, type TestDb } from '../support/db';

let db: TestDb;
jest.setTimeout(90_000); // seeding the whole demo takes ~20 s alone, more on a loaded machine
beforeAll(async () => {
  db = await createTestDb();
  for (const step of SEED_STEPS) await step.run(db.ds);
});
afterAll(async () => {
  await db.drop();
});

it('seeds a stressing, a heating, a loading and a booked run on demo rigs', async () => {
  const runs = await db.ds.getRepository(RunEntity).find({ where: {}, relations: { rig: true } });
  const mine = runs.filter((r) => ['THB-2612-G', 'HOTL-2609-D-2', 'IOL-2605-H', 'HTRB-2611-A+1'].includes(r.code));
  expect(mine.map((r) => `${r.code}:${r.state}:${r.rig?.code}`).sort()).toEqual([
    'HOTL-2609-D-2:heating:OV-03',
    'HTRB-2611-A+1:booked:OV-02',
    'IOL-2605-H:loading:OV-06',
    'THB-2612-G:stressing:HC-05',
  ]);
  const loading = mine.find((r) => r.code === 'IOL-2605-H')!;
  expect(await db.ds.getRepository(RunSocketEntity).countBy({ runId: loading.id })).toBe(20);
  expect(loading.sampleSize).toBe(32);
});

it('the demo requests carry due dates and priorities, and the timeline shows the heating HOTL run late', async () => {
  const ctx = createContext(db.ds, configFromEnv({} as NodeJS.ProcessEnv));
  const tl = await ctx.services.runs.timeline({});
  const bars = tl.rows.flatMap((r) => r.bars);
  const of = (code: string) => bars.find((b) => b.code === code)!;
  expect([of('HOTL-2609-D-2').priority, of('THB-2612-G').priority, of('HTRB-2611-A+1').priority, of('IOL-2605-H').priority]).toEqual([
    4, 3, 1, 2,
  ]);
  // 1000 plan hours + 2 holds of 24 h + 2 h heating from now against a due date 900 h away: ~150 h late.
  expect(of('HOTL-2609-D-2').lateH).toBeGreaterThan(140);
  expect(of('THB-2612-G').lateH).toBe(0);
  expect(of('IOL-2605-H').lateH).toBeNull();
});

it('the scheduler commands the live demo runs right away (the floor moves)', async () => {
  const sent: Array<{ rig: string; cmdId: string; cmd: RigCommandBody }> = [];
  const link: RigLink = {
    connected: () => true,
    send: async (rig, cmd, o) => (sent.push({ rig, cmdId: o!.cmdId!, cmd }), { v: 1, rig, cmdId: o!.cmdId!, ok: true }),
  };
  const ctx = createContext(db.ds, configFromEnv({} as NodeJS.ProcessEnv));
  const s = new RunScheduler(ctx, { rigLink: () => link, cronExpression: null, listen: false, log: () => undefined });
  await s.pass();
  await s.idle();
  const byRig = (code: string) => sent.filter((x) => x.rig === code).map((x) => x.cmd.type);
  expect(byRig('HC-05')).toEqual(['setpoint', 'bias']);
  expect(byRig('OV-03')).toEqual(['setpoint']);
  expect(byRig('OV-06')).toEqual([]);
  expect(sent.find((x) => x.rig === 'HC-05' && x.cmd.type === 'setpoint')!.cmd).toMatchObject({ setpointC: 85, humidityPct: 85 });
  // The demo's chamber run TC-2612-C: TC-01 gets the plan's cycling programme (condition B), never bias; AC-01 idles.
  expect(byRig('TC-01')).toEqual(['setpoint']);
  expect(sent.find((x) => x.rig === 'TC-01')!.cmd).toMatchObject({
    type: 'setpoint',
    humidityPct: null,
    profile: { lowC: -55, highC: 125, dwellMin: 10, rampKPerMin: 10 },
  });
  expect(byRig('AC-01')).toEqual([]);
  await s.stop();
});

// Issue #19: the demo's evidence exercises every verdict state honestly (server/seed/seed-history.ts).
describe('the demo evidence', () => {
  const sampleOf = async (code: string) => {
    const run = await db.ds.getRepository(RunEntity).findOneByOrFail({ code });
    return loadSampleEvidence(db.ds.manager, run.sampleId!);
  };
  const at = (e: SampleEvidence, h: number) => e.coverage.find((c) => c.readPointH === h)!;

  it('every run belongs to a sample; a sample smaller than its plan carries a deviation', async () => {
    expect(await db.ds.getRepository(RunEntity).countBy({ sampleId: IsNull() })).toBe(0);
    const short: Array<{ planned_size: number; booked_size: number; deviation_reason: string | null }> = await db.ds.query(
      `SELECT planned_size, booked_size, deviation_reason FROM samples WHERE booked_size < planned_size`,
    );
    expect(short.length).toBeGreaterThan(0);
    expect(short.filter((s) => !s.deviation_reason)).toEqual([]);
  });

  it('HG2611-A: 77 devices split over OV-01 (64) and OV-02 (13), every read point complete', async () => {
    const e = await sampleOf('HTRB-2611-A');
    expect(e.runs.map((r) => `${r.code}:${r.rigCode}:${r.sampleSize}:${r.state}`)).toEqual([
      'HTRB-2611-A:OV-01:64:finished',
      'HTRB-2611-A-2:OV-02:13:finished',
    ]);
    expect([e.plannedSize, e.bookedSize, e.loadedSize, e.deviation]).toEqual([77, 77, 77, null]);
    expect(e.coverage.every((c) => c.complete)).toBe(true);
  });

  it('HG2611-B: the 1000 h read point is incomplete (four devices missing), the earlier ones complete', async () => {
    const e = await sampleOf('HTRB-2611-B');
    expect(at(e, 1000)).toMatchObject({ complete: false, disposed: 0, measured: 73 });
    expect(at(e, 1000).missing.map((x) => x.serial)).toEqual(['B0040', 'B0041', 'B0042', 'B0043']);
    expect(at(e, 500)).toMatchObject({ complete: true, measured: 77 });
  });

  it('HG2610-E: an open at 500 h and a trip counted as a failure; the tripped device holds 310 h', async () => {
    const e = await sampleOf('HOTL-2610-E');
    expect(e.runs.map((r) => r.rigCode)).toEqual(['OV-04', 'OV-03']);
    expect(at(e, 500)).toMatchObject({ catastrophic: 1, disposed: 2, complete: true });
    const tripped = e.devices.find((d) => d.serial === 'E0012')!;
    expect(tripped).toMatchObject({ creditedHours: 310, tripped: true, failedAtH: 500, disposition: { kind: 'trip-failure' } });
    expect(e.devices.find((d) => d.serial === 'E0023')!.failedAtH).toBe(500);
  });

  it('HG2608-F: 48 of 77 with the recorded deviation; HG2612-C: in progress at 620 h on two rigs', async () => {
    const f = await sampleOf('THB-2608-F');
    expect([f.plannedSize, f.bookedSize]).toEqual([77, 48]);
    expect(f.deviation?.reason).toMatch(/^Customer released 48 devices/);
    const c = await sampleOf('HTRB-2612-C');
    expect(c.runs.map((r) => `${r.rigCode}:${r.state}:${r.stressHours}`)).toEqual(['OV-01:stressing:620', 'OV-02:stressing:620']);
    expect(at(c, 500).complete).toBe(true);
    expect(at(c, 1000).reached).toBe(false);
  });

  it('HG2609-D: the six warm 1000 h readings are flagged and confirmed', async () => {
    const rows: Array<{ n: number; confirmed: number }> = await db.ds.query(
      `SELECT count(*)::int AS n, count(confirmed_at)::int AS confirmed FROM measurements m JOIN runs r ON r.id = m.run_id
       WHERE r.code = 'HOTL-2609-D' AND m.conditions_flag IS NOT NULL`,
    );
    expect(rows[0]).toEqual({ n: 6, confirmed: 6 });
  });
});
