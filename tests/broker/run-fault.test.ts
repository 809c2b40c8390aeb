/**
 * A rig that refuses a command puts the run into the fault state (issue #20 item 7, issue #23
 * item 2), through the real pieces: the Emberlot broker, the server's telemetry feature, the rig
 * simulator and the scheduler. The run was started while the rig reported 8 sockets; the board
 * now in the oven has 4 (the simulator refuses a bias command naming sockets it does not have).
 * The run must not stay "under stress" with 0 h: it goes into fault with a critical alarm, no
 * hours count, and Retry is refused with the numbers while the board is still the wrong one.
 */
import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { startRig, type RigHandle } from '../../rig-simulator';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import {
  AlarmEntity,
  AuditLogEntity,
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  StressPlanEntity,
} from '../../server/db/entities';
import { handleRunEvent } from '../../server/modules/alarms/run-event-alarms';
import { RUN_EVENT, type RunEvent } from '../../server/modules/runs/run-events';
import { RunsService } from '../../server/modules/runs/runs.service';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestDb, type TestDb } from '../support/db';
import { recordTimeZero, reportSockets, setRigServiceDates } from '../support/permit';
import { waitFor } from './mqtt-test-helpers';

jest.setTimeout(40_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRET = 'ov09-fault-secret';

let db: TestDb;
let eb: EmberlotBroker;
let ctx: AppContext;
let stopTelemetry: (() => Promise<void>) | null = null;
let rig: RigHandle;
let rigId: string;
let runId: string;
let scheduler: RunScheduler;
const handled = new Set<Promise<void>>();
const operator = { id: randomUUID(), email: 'operator@test.example', name: 'Test operator', role: 'operator' as const };
const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });

async function untilState(state: string, timeoutMs = 20_000): Promise<RunEntity> {
  const deadline = Date.now() + timeoutMs;
  let r = await run();
  while (r.state !== state && Date.now() < deadline) {
    await new Promise((res) => setTimeout(res, 50));
    r = await run();
  }
  if (r.state !== state)
    throw new Error(`run did not reach ${state} (is ${r.state}; rig setpoint ${rig.state().setpointC}, chamber ${rig.state().chamberC})`);
  return r;
}

beforeAll(async () => {
  db = await createTestDb();
  const m = db.ds.manager;
  rigId = (
    await m.save(
      m.create(RigEntity, {
        code: 'OV-09',
        name: 'Oven 9',
        socketCount: 8,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-09',
        mqttSecretHash: await bcrypt.hash(SECRET, 4),
        credentialsIssuedAt: new Date(),
      }),
    )
  ).id;
  const type = await m.save(
    m.create(
      DeviceTypeEntity,
      DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!,
    ),
  );
  const lot = await m.save(m.create(LotEntity, { code: 'HG2660-F', deviceTypeId: type.id, quantity: 100 }));
  const devices = await m.save(
    Array.from({ length: 8 }, (_, k) => m.create(DeviceEntity, { lotId: lot.id, serial: `F${String(k + 1).padStart(4, '0')}` })),
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
      readPointsH: [0, 4, 12],
      sampleSize: 8,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
    }),
  );
  runId = (
    await m.save(
      m.create(RunEntity, {
        code: 'HTRB-2660-F',
        planId: plan.id,
        rigId,
        state: 'loading',
        sampleSize: 8,
        stateChangedAt: new Date(),
        nextReadPoint: 1,
        scheduledStart: new Date(),
        scheduledEnd: new Date(Date.now() + 60_000),
      }),
    )
  ).id;
  await m.insert(RunLotEntity, { runId, lotId: lot.id });
  await m.insert(
    RunSocketEntity,
    devices.map((d, i) => ({ runId, deviceId: d.id, socketIndex: i })),
  );
  // The permit as it stood at start: dates recorded, time zero measured, the rig last reported 8 sockets.
  await setRigServiceDates(db.ds, rigId);
  await recordTimeZero(db.ds, runId);
  await reportSockets(db.ds, rigId, [0, 1, 2, 3, 4, 5, 6, 7], { seq: 1 });

  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  ctx.events.on(RUN_EVENT, (e: RunEvent) => {
    const p = handleRunEvent(ctx, e).finally(() => handled.delete(p));
    handled.add(p);
  });
  eb = await createEmberlotBroker({
    port: 0,
    authenticate: createPgAuthenticate({ pool: pgPoolOf(ctx), server: SERVER, verifiedCacheSize: 10 }),
  });
  stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, ...SERVER },
    clientId: 'emberlot-server-fault-test',
    sweepEveryMs: 60_000,
  });
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
});

afterAll(async () => {
  await scheduler?.stop();
  await rig?.stop();
  await stopTelemetry?.();
  await eb?.close();
  await db?.drop();
});

test('a bias command refused by the rig (fewer sockets than loaded) puts the run into fault with a critical alarm', async () => {
  const svc = new RunsService(ctx);
  const started = await svc.act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  expect(started.state).toBe('heating');
  // The board now in the oven has 4 sockets.
  rig = startRig({
    rigCode: 'OV-09',
    brokerUrl: `mqtt://127.0.0.1:${eb.port}`,
    username: 'rig-ov-09',
    password: SECRET,
    sockets: 4,
    mode: 'reverse',
    chamberC: 25,
    setpointC: 25,
    biasOn: false,
    vV: 0,
    stressHoursPerWallSecond: 4,
    samplePeriodWallS: 0.1,
    reconnectWallS: 0.1,
    resendAfterWallS: 1,
  });
  await waitFor(() => rig.connected, 5000, 'simulated rig');
  scheduler = new RunScheduler(ctx, { log: () => undefined, ambientCheckEveryMs: 0 });
  scheduler.start();

  const r = await untilState('fault');
  expect(r.faultReason).toBe('OV-09 refused the bias-on command: "no socket 4, 5, 6, 7 on this rig (sockets 0–3)".');
  expect(r.faultAt).toBeInstanceOf(Date);
  expect(r.stressHours).toBeLessThan(0.5); // at most the samples before the refusal came back
  const audit = await db.ds.getRepository(AuditLogEntity).find({ where: { entityId: runId, action: 'run.fault' } });
  expect(audit).toHaveLength(1);
  expect(audit[0]).toMatchObject({ actor: 'system', reason: r.faultReason });
  expect(audit[0].details).toMatchObject({ from: 'stressing', to: 'fault', command: 'bias', biasOn: true, refused: true, attempts: 1 });

  await scheduler.idle();
  while (handled.size) await Promise.allSettled([...handled]);
  const alarms = await db.ds.getRepository(AlarmEntity).find({ where: { rigId, kind: 'command-failed' } });
  expect(alarms).toHaveLength(1);
  expect(alarms[0]).toMatchObject({
    severity: 'critical',
    runId,
    clearedAt: null,
    title: 'Run HTRB-2660-F on OV-09 in fault: bias-on command refused',
  });
  expect(alarms[0].message).not.toMatch(/run:[0-9a-f]{8}/);

  // The view: "Rig fault", not "Under stress"; no socket of the rig is biased.
  const view = await svc.get(runId);
  expect(view).toMatchObject({ state: 'fault', stateLabel: 'Rig fault', allowedActions: ['retry', 'abort'] });
  expect(rig.state().sockets.every((s) => !s.biasOn)).toBe(true);

  // Retry is refused with the numbers while the board is still the 4-socket one; the run stays in fault.
  const current = await run();
  await expect(svc.act(operator, runId, 'retry', { rowVersion: current.rowVersion, reason: 'checked the wiring' })).rejects.toThrow(
    /^Run HTRB-2660-F cannot heat again yet: OV-09 reports 4 sockets \(0–3\) in its latest telemetry .*; this run loads 8 devices, 4 of them in sockets the rig does not report \(4–7\)\./,
  );
  expect((await run()).state).toBe('fault');
});
