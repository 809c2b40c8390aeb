/**
 * The demo's power-cycling run: IOL-2605-J under stress on the cycling bench CY-07, counted in
 * cycles; the scheduler's bias command carries the plan's on/off times; the simulator fleet file
 * gives the bench free-air sockets that start unbiased (so the command brings the program), and
 * with those settings the simulated swing, read from the TSP, settles inside the plan's ΔTj band.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import { RunEntity, RunSocketEntity, StressPlanEntity } from '../../server/db/entities';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { SEED_STEPS } from '../../server/seed/seed';
import { writeDemoFleet } from '../../scripts/demo-fleet';
import { applyCommand, clearSwingReports, initialRigState, stepRig, type RigConfig } from '../../rig-simulator';
import { cycleBand } from '../../shared/scheduling';
import { createTestDb, type TestDb } from '../support/db';

let db: TestDb;
jest.setTimeout(40_000);
beforeAll(async () => {
  db = await createTestDb();
  for (const step of SEED_STEPS) await step.run(db.ds);
});
afterAll(async () => {
  await db.drop();
});

it('seeds IOL-2605-J stressing on CY-07, counted in cycles (1,800 of 15,000)', async () => {
  const run = await db.ds.getRepository(RunEntity).findOneOrFail({ where: { code: 'IOL-2605-J' }, relations: { rig: true, plan: true } });
  expect([run.state, run.rig?.code, run.sampleSize, run.cyclesDone]).toEqual(['stressing', 'CY-07', 16, 1800]);
  expect(run.plan?.kind).toBe('iol');
  expect(run.plan?.cycle).toEqual({ onMin: 2, offMin: 2, deltaTjC: 100, cycles: 15000 });
  const sockets = await db.ds.getRepository(RunSocketEntity).findBy({ runId: run.id });
  expect(sockets.map((s) => s.cyclesDone)).toEqual(Array(16).fill(1800));
});

it('the scheduler biases the bench with the plan’s on/off program', async () => {
  const sent: Array<{ rig: string; cmd: RigCommandBody }> = [];
  const link: RigLink = {
    connected: () => true,
    send: async (rig, cmd, o) => (sent.push({ rig, cmd }), { v: 1, rig, cmdId: o!.cmdId!, ok: true }),
  };
  const ctx = createContext(db.ds, configFromEnv({} as NodeJS.ProcessEnv));
  const s = new RunScheduler(ctx, { rigLink: () => link, cronExpression: null, listen: false, log: () => undefined });
  await s.pass();
  await s.idle();
  await s.stop();
  const bias = sent.find((x) => x.rig === 'CY-07' && x.cmd.type === 'bias');
  expect(bias?.cmd).toMatchObject({ on: true, cycle: { onS: 120, offS: 120, deltaTjC: 100 } });
});

it('the fleet file’s bench swings its junctions into the plan’s ΔTj band (simulated, read from the TSP)', async () => {
  const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'fleet-')), 'fleet.json');
  await writeDemoFleet(db.ds, file);
  const fleet = JSON.parse(fs.readFileSync(file, 'utf8')) as { rigs: Array<RigConfig & Record<string, unknown>> };
  const bench = fleet.rigs.find((r) => r.rigCode === 'CY-07')!;
  expect(bench).toMatchObject({ biasOn: false, caseTauStressS: 15, stressHoursPerWallSecond: 120 / 3600 });
  expect(bench.faults).toBeUndefined(); // the injected runaway sits on a powered-life board, not here
  const plan = await db.ds.getRepository(StressPlanEntity).findOneOrFail({ where: { kind: 'iol', current: true } });
  let state = initialRigState({ ...bench, brokerUrl: 'mqtt://unused' });
  state = applyCommand(state, {
    v: 1,
    cmdId: 'demo-bias',
    type: 'bias',
    sockets: 'all',
    on: true,
    vV: plan.bias.vceV!,
    icA: plan.bias.icA!,
    cycle: { onS: 120, offS: 120, deltaTjC: 100 },
  }).state;
  // 20 cycles: the drive settles; then every socket's last swing lies in the band (100–125 K).
  for (let k = 0; k < 20; k++) state = stepRig(clearSwingReports(state), 240);
  const band = cycleBand(plan.cycle!.deltaTjC);
  for (const s of state.sockets) {
    expect(s.cycleCount).toBe(20);
    expect(s.swingLowC!).toBeGreaterThanOrEqual(band.lowC);
    expect(s.swingHighC!).toBeLessThanOrEqual(band.highC);
    // The cold end is the 25 °C ambient (2 min off, case τ 15 s): the peak stays below Tj max.
    expect(s.tjC).toBeCloseTo(25, 0);
    expect(s.tjC + s.swingHighC!).toBeLessThan(s.device.tjMaxC);
  }
});
