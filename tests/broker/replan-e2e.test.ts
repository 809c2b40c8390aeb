/**
 * Re-planning end to end through the real pieces: the Emberlot broker, the server's telemetry
 * feature (ingest + RigLink), two simulated rigs and the re-planner's listener (startReplanning).
 * A rig's connection dies (its last will reaches the server) → proposals appear for the runs booked
 * on it → a manager accepts one → that run is booked on the other rig → the rig comes back → the
 * run still waiting gets the in-place option.
 */
import { randomUUID } from 'node:crypto';
import type { RigHandle } from '../../rig-simulator';
import { configFromEnv } from '../../server/config';
import {
  DeviceTypeEntity,
  LotEntity,
  ReplanProposalEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  StressPlanEntity,
} from '../../server/db/entities';
import { startReplanning } from '../../server/modules/replan/replan.feature';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { timingFrom } from '../../server/modules/runs/scheduling-data';
import { runDurationMs } from '../../shared/scheduling';
import { createTestDb } from '../support/db';
import { insertMqttRig, startBrokerStack, type BrokerStack, type MqttRig } from '../support/broker-stack';

jest.setTimeout(60_000);

const DAY = 24 * 3_600_000;

let stack: BrokerStack;
let db: BrokerStack['db'];
const rigs: RigHandle[] = [];
const rigIds: Record<string, string> = {};
const runIds: string[] = [];

const manager = { id: randomUUID(), email: 'manager@test.example', name: 'Test manager', role: 'manager' as const };

async function until<T>(read: () => Promise<T | null | undefined | false>, label: string, timeoutMs = 15_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await read();
    if (v) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const openProposals = (runId: string) => db.ds.getRepository(ReplanProposalEntity).find({ where: { runId, state: 'open' } });
const rigOnline = async (code: string) => (await db.ds.getRepository(RigEntity).findOneByOrFail({ code })).online;

beforeAll(async () => {
  const testDb = await createTestDb();
  const m = testDb.ds.manager;
  const mqttRigs: MqttRig[] = [];
  for (const code of ['OV-21', 'OV-22']) {
    const r = await insertMqttRig(testDb.ds, {
      code,
      socketCount: 4,
      secret: `${code}-secret`,
      calibrationDueAt: new Date(Date.now() + 365 * DAY),
    });
    rigIds[code] = r.id;
    mqttRigs.push(r);
  }
  const type = await m.save(
    m.create(
      DeviceTypeEntity,
      DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!,
    ),
  );
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'HTRB 125 °C short',
      kind: 'htrb',
      deviceTypeId: type.id,
      chamberC: 125,
      humidityPct: null,
      bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: 12,
      readPointsH: [0, 12],
      sampleSize: 4,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
    }),
  );
  // Two runs booked on OV-21, an hour and two hours from now, each for the plan's length on the
  // configured stress clock (12 h + 2 h heating allowance).
  const runMs = runDurationMs(plan, timingFrom(configFromEnv({} as NodeJS.ProcessEnv)));
  for (const [i, lotCode] of ['HG2801-A', 'HG2802-B'].entries()) {
    const lot = await m.save(m.create(LotEntity, { code: lotCode, deviceTypeId: type.id, quantity: 100 }));
    const start = Date.now() + (i + 1) * 3_600_000;
    const r = await m.save(
      m.create(RunEntity, {
        code: `HTRB-${lotCode.slice(2)}`,
        planId: plan.id,
        rigId: rigIds['OV-21'],
        state: 'booked',
        sampleSize: 4,
        stateChangedAt: new Date(),
        nextReadPoint: 1,
        scheduledStart: new Date(start),
        scheduledEnd: new Date(start + runMs),
      }),
    );
    await m.insert(RunLotEntity, { runId: r.id, lotId: lot.id });
    runIds.push(r.id);
  }

  stack = await startBrokerStack(testDb, { clientId: 'emberlot-server-replan-test' });
  db = stack.db;
  const stopReplanning = startReplanning(stack.ctx, () => undefined);
  stack.onStop(stopReplanning);
  for (const r of mqttRigs) {
    rigs.push(
      await stack.startRig(r, {
        sockets: 4,
        mode: 'reverse',
        chamberC: 25,
        setpointC: 25,
        biasOn: false,
        vV: 0,
        stressHoursPerWallSecond: 1,
        samplePeriodWallS: 0.2,
        reconnectWallS: 0.1,
        resendAfterWallS: 1,
      }),
    );
  }
  await until(async () => (await rigOnline('OV-21')) && (await rigOnline('OV-22')), 'both rigs online');
});

afterAll(() => stack?.stop());

test('rig drops off → proposals → a manager accepts → booked on the other rig; the rig returns → in place', async () => {
  const [runA, runB] = runIds;
  expect(await openProposals(runA)).toEqual([]);
  rigs[0].dropFor(3000);
  // The last will marks OV-21 offline; the listener proposes OV-22 for both booked runs.
  const [pa] = await until(async () => {
    const p = await openProposals(runA);
    return p.length ? p : null;
  }, 'a proposal for the first run');
  expect(await rigOnline('OV-21')).toBe(false);
  expect(pa).toMatchObject({ kind: 'move', fromRigId: rigIds['OV-21'], toRigId: rigIds['OV-22'], delayBasis: 'booked-finish' });
  expect(pa.reason).toMatch(/^Oven OV-21 went offline \(/);
  const pb = await until(async () => (await openProposals(runB)).find((p) => p.kind === 'move'), 'a proposal for the second run');
  expect(pb.toRigId).toBe(rigIds['OV-22']);

  const accepted = await stack.ctx.services.replan.accept(manager, pa.id);
  expect(accepted).toMatchObject({ state: 'accepted', toRigCode: 'OV-22', runCode: 'HTRB-2801-A' });
  const moved = await db.ds.getRepository(RunEntity).findOneByOrFail({ id: runA });
  expect(moved.rigId).toBe(rigIds['OV-22']);
  expect(moved.state).toBe('booked');

  // The rig reconnects: the second run, still waiting on OV-21, gets the in-place option.
  const inPlace = await until(async () => (await openProposals(runB)).find((p) => p.kind === 'in-place'), 'the in-place option');
  expect(await rigOnline('OV-21')).toBe(true);
  expect(inPlace.toRigId).toBe(rigIds['OV-21']);
  expect(inPlace.reason).toMatch(/^Oven OV-21 is back online \(/);
  // Its booked start lies ahead and OV-21 is free then: no delay.
  const runBRow = await db.ds.getRepository(RunEntity).findOneByOrFail({ id: runB });
  expect(inPlace.startAt.getTime()).toBe(runBRow.scheduledStart!.getTime());
  expect(inPlace.delayH).toBe(0);
  // The move proposed while it was away was replaced by the fresh set.
  expect((await db.ds.getRepository(ReplanProposalEntity).findOneByOrFail({ id: pb.id })).state).toBe('superseded');
  // Nothing came back for the run that moved.
  expect(await openProposals(runA)).toEqual([]);
});
