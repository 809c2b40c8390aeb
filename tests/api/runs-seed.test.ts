/**
 * The demo seed's live runs: one under stress, one heating, one being loaded, one booked, each
 * passing the booking constraint checks on its rig; the scheduler picks the live ones up at once.
 */
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import { RunEntity, RunSocketEntity } from '../../server/db/entities';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { SEED_STEPS } from '../../server/seed/seed';
import { createTestDb, type TestDb } from '../support/db';

let db: TestDb;
jest.setTimeout(25_000);
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

it('the scheduler commands the live demo runs right away (the floor moves)', async () => {
  const sent: Array<{ rig: string; cmdId: string; cmd: RigCommandBody }> = [];
  const link: RigLink = { connected: () => true, send: async (rig, cmd, o) => (sent.push({ rig, cmdId: o!.cmdId!, cmd }), { v: 1, rig, cmdId: o!.cmdId!, ok: true }) };
  const ctx = createContext(db.ds, configFromEnv({} as NodeJS.ProcessEnv));
  const s = new RunScheduler(ctx, { rigLink: () => link, cronExpression: null, listen: false, log: () => undefined });
  await s.pass();
  await s.idle();
  const byRig = (code: string) => sent.filter((x) => x.rig === code).map((x) => x.cmd.type);
  expect(byRig('HC-05')).toEqual(['setpoint', 'bias']);
  expect(byRig('OV-03')).toEqual(['setpoint']);
  expect(byRig('OV-06')).toEqual([]);
  expect(sent.find((x) => x.rig === 'HC-05' && x.cmd.type === 'setpoint')!.cmd).toMatchObject({ setpointC: 85, humidityPct: 85 });
  await s.stop();
});
