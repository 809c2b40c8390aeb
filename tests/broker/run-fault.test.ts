/**
 * A rig that refuses a command puts the run into the fault state (issue #20 item 7, issue #23
 * item 2), through the real pieces: the Emberlot broker, the server's telemetry feature, the rig
 * simulator and the scheduler. The run was started while the rig reported 8 sockets; the board
 * now in the oven has 4 (the simulator refuses a bias command naming sockets it does not have).
 * The run must not stay "under stress" with 0 h: it goes into fault with a critical alarm, no
 * hours count, and Retry is refused with the numbers while the board is still the wrong one.
 */
import type { RigHandle } from '../../rig-simulator';
import { AlarmEntity, AuditLogEntity, RunEntity } from '../../server/db/entities';
import { handleRunEvent } from '../../server/modules/alarms/run-event-alarms';
import { RUN_EVENT, type RunEvent } from '../../server/modules/runs/run-events';
import { RunsService } from '../../server/modules/runs/runs.service';
import { createTestDb } from '../support/db';
import {
  TEST_OPERATOR as operator,
  bookLoadedRun,
  insertMqttRig,
  startBrokerStack,
  type BrokerStack,
  type MqttRig,
} from '../support/broker-stack';
import { recordTimeZero, reportSockets, setRigServiceDates } from '../support/permit';

jest.setTimeout(40_000);

let stack: BrokerStack;
let db: BrokerStack['db'];
let ov09: MqttRig;
let rig: RigHandle;
let rigId: string;
let runId: string;
const handled = new Set<Promise<void>>();
const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });

const untilState = (state: string, timeoutMs = 20_000): Promise<RunEntity> =>
  stack.untilRun(runId, state, {
    timeoutMs,
    describe: () => `rig setpoint ${rig.state().setpointC}, chamber ${rig.state().chamberC}`,
  });

beforeAll(async () => {
  const testDb = await createTestDb();
  ov09 = await insertMqttRig(testDb.ds, { code: 'OV-09', name: 'Oven 9', socketCount: 8, secret: 'ov09-fault-secret' });
  rigId = ov09.id;
  runId = (
    await bookLoadedRun(testDb.ds, {
      rigId,
      lotCode: 'HG2660-F',
      serials: Array.from({ length: 8 }, (_, k) => `F${String(k + 1).padStart(4, '0')}`),
      plan: {
        name: 'HTRB 125 °C short',
        kind: 'htrb',
        chamberC: 125,
        bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
        durationH: 12,
        readPointsH: [0, 4, 12],
      },
      run: { code: 'HTRB-2660-F' },
    })
  ).runId;
  // The permit as it stood at start: dates recorded, time zero measured, the rig last reported 8 sockets.
  await setRigServiceDates(testDb.ds, rigId);
  await recordTimeZero(testDb.ds, runId);
  await reportSockets(testDb.ds, rigId, [0, 1, 2, 3, 4, 5, 6, 7], { seq: 1 });

  stack = await startBrokerStack(testDb, {
    clientId: 'emberlot-server-fault-test',
    onContext: (ctx) =>
      ctx.events.on(RUN_EVENT, (e: RunEvent) => {
        const p = handleRunEvent(ctx, e).finally(() => handled.delete(p));
        handled.add(p);
      }),
  });
  db = stack.db;
});

afterAll(() => stack?.stop());

test('a bias command refused by the rig (fewer sockets than loaded) puts the run into fault with a critical alarm', async () => {
  const svc = new RunsService(stack.ctx);
  const started = await svc.act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  expect(started.state).toBe('heating');
  // The board now in the oven has 4 sockets.
  rig = await stack.startRig(ov09, {
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
  const scheduler = stack.startScheduler({ rigLink: () => stack.ctx.services.rigLink });

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
