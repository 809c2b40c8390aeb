/**
 * A short run through the real pieces: the Emberlot broker, the server's telemetry feature (ingest
 * + RigLink over MQTT), the rig simulator on an accelerated clock and the scheduler (node-cron +
 * TELEMETRY_LANDED). Heating → stressing → read point (cooled under bias, then bias off at the rig) → measurements done →
 * scheduler restart mid-stress → cooling → finished. The hours after the restart equal the accrual
 * rule applied to the stored telemetry, and no cmdId reaches the rig twice.
 */
import { HOURS_EPS, accrualConditionsFor, accrueSeries, type ClockSample } from '../../shared/scheduling';
import type { RigHandle } from '../../rig-simulator';
import { AuditLogEntity, RunEntity, type StressPlanEntity } from '../../server/db/entities';
import { RunsService } from '../../server/modules/runs/runs.service';
import type { RunScheduler } from '../../server/modules/scheduler/scheduler';
import { createTestDb } from '../support/db';
import {
  TEST_OPERATOR as operator,
  bookLoadedRun,
  insertMqttRig,
  startBrokerStack,
  untilTrue,
  type BrokerStack,
} from '../support/broker-stack';
import { waitFor } from './mqtt-test-helpers';
import { permitFromLiveRig } from '../support/permit';

jest.setTimeout(30_000);

let stack: BrokerStack;
let db: BrokerStack['db'];
let rig: RigHandle;
let rigId: string;
let runId: string;
let plan: StressPlanEntity;
let scheduler: RunScheduler;
let sent: BrokerStack['sent'];

const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
const until = (state: string, timeoutMs = 15_000) =>
  stack.untilRun(runId, state, {
    timeoutMs,
    describe: async (r) => {
      const [b] = await db.ds.query('SELECT max(seq) AS s, count(*) AS n FROM telemetry_batches WHERE rig_id = $1', [rigId]);
      return `seq ${r.accruedToSeq}; stored up to ${b.s} (${b.n}); sent ${sent.map((x) => x.cmdId.split(':').slice(2).join(':')).join(', ')}; rig setpoint ${rig.state().setpointC}, chamber ${rig.state().chamberC}`;
    },
  });

beforeAll(async () => {
  const testDb = await createTestDb();
  const ov07 = await insertMqttRig(testDb.ds, { code: 'OV-07', name: 'Oven 7', socketCount: 4, secret: 'ov07-lifecycle-secret' });
  rigId = ov07.id;
  const loaded = await bookLoadedRun(testDb.ds, {
    rigId,
    lotCode: 'HG2611-A',
    serials: ['A0001', 'A0002', 'A0003', 'A0004'],
    plan: {
      name: 'HTRB 125 °C short',
      kind: 'htrb',
      chamberC: 125,
      bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: 12,
      readPointsH: [0, 4, 12],
    },
    run: { code: 'HTRB-2611-A' },
  });
  runId = loaded.runId;
  plan = loaded.plan;
  stack = await startBrokerStack(testDb, { clientId: 'emberlot-server-lifecycle-test' });
  db = stack.db;
  sent = stack.sent;
  // 4 stress hours per wall second, a sample every 0.1 s (0.4 h); the oven lags 0.5 stress hour.
  rig = await stack.startRig(ov07, {
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
});

afterAll(() => stack?.stop());

async function samplesBetween(fromSeq: number, toSeq: number): Promise<ClockSample[]> {
  const b: Array<Record<string, unknown>> = await db.ds.query(
    `SELECT seq, stress_clock_s, chamber_c, humidity_pct FROM telemetry_batches WHERE rig_id = $1 AND seq BETWEEN $2 AND $3 ORDER BY seq`,
    [rigId, fromSeq, toSeq],
  );
  const s: Array<Record<string, unknown> & { bias_on: boolean; tripped: boolean }> = await db.ds.query(
    `SELECT seq, socket, v_v, bias_on, tripped FROM telemetry_samples WHERE rig_id = $1 AND seq BETWEEN $2 AND $3 ORDER BY seq, socket`,
    [rigId, fromSeq, toSeq],
  );
  return b.map((x) => ({
    seq: Number(x.seq),
    clockS: Number(x.stress_clock_s),
    chamberC: Number(x.chamber_c),
    humidityPct: null,
    sockets: s
      .filter((y) => Number(y.seq) === Number(x.seq))
      .map((y) => ({ socket: Number(y.socket), vV: Number(y.v_v), biasOn: y.bias_on, tripped: y.tripped })),
  }));
}

test('heating → stressing → read point: the rig heats, biases, and at 4 h cools under bias before bias comes off', async () => {
  const svc = new RunsService(stack.ctx);
  await permitFromLiveRig(db.ds, runId, rigId);
  await svc.act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  scheduler = stack.startScheduler();
  scheduler.start();
  await until('stressing');
  await until('read-hold');
  const r = await run();
  expect(r.stressHours).toBe(4); // the interval that crossed 4 h credited up to it (shareToTarget, shared/scheduling/accrual.ts)
  await waitFor(() => rig.state().setpointC === 25, 5000, 'chamber to ambient');
  await waitFor(() => rig.state().sockets.every((s) => !s.biasOn), 5000, 'bias off at the rig');
  // The cool-down command went out before the bias-off command [pub: MIL-M-38510/757C §4.5.2].
  expect(sent.map((x) => x.cmd.type)).toEqual(['setpoint', 'bias', 'setpoint', 'bias']);
  await untilTrue(async () => (await run()).biasRemovedAt !== null, 'bias removal recorded');
  // The stored telemetry shows the sequence: the chamber falls from the stress temperature with bias
  // on, and bias is first seen off only at or below the lab's "remove bias at" 35 °C.
  const [hold] = await db.ds.query(`SELECT details FROM audit_log WHERE entity_id = $1 AND action = 'run.read-point'`, [runId]);
  await scheduler.idle();
  await untilTrue(
    async () => (await samplesBetween(Number(hold.details.seq), Number.MAX_SAFE_INTEGER)).some((x) => x.sockets.every((s) => !s.biasOn)),
    'an unbiased sample stored',
  );
  const after = await samplesBetween(Number(hold.details.seq), Number.MAX_SAFE_INTEGER);
  const firstOff = after.findIndex((x) => x.sockets.every((s) => !s.biasOn));
  const biasedCooling = after.slice(0, firstOff);
  expect(biasedCooling.every((x) => x.sockets.every((s) => s.biasOn))).toBe(true);
  expect(Math.max(...biasedCooling.map((x) => x.chamberC))).toBeGreaterThan(120);
  expect(Math.min(...biasedCooling.map((x) => x.chamberC))).toBeLessThan(60); // cooled well down while still biased
  expect(after[firstOff].chamberC).toBeLessThanOrEqual(35);
});

test('measurements done → heats again; a scheduler restart mid-stress keeps exact hours and repeats no command', async () => {
  const h1 = (await run()).stressHours;
  const svc = new RunsService(stack.ctx);
  await svc.act(operator, runId, 'measurements-done', { rowVersion: (await run()).rowVersion });
  await until('stressing');
  await waitFor(() => rig.state().sockets.every((s) => s.biasOn), 5000, 'bias on at the rig');
  // Let a few stressed samples land, then restart the scheduler (fresh memory, same database).
  const before = (await run()).stressHours;
  for (let k = 0; k < 40 && (await run()).stressHours < before + 1; k++) await new Promise((r) => setTimeout(r, 50));
  await scheduler.stop();
  const sentBefore = sent.length;
  await new Promise((r) => setTimeout(r, 300)); // telemetry keeps landing while no scheduler runs
  scheduler = stack.startScheduler();
  scheduler.start();
  await until('cooling');
  await until('finished');

  const trail = await db.ds
    .getRepository(AuditLogEntity)
    .find({ where: { entityId: runId, action: 'run.ambient-reached' }, order: { id: 'ASC' } });
  const fromSeq = Number(trail[1].details.seq);
  const done = await run();
  const series = await samplesBetween(fromSeq, done.accruedToSeq);
  const oracle = accrueSeries(series.slice(1), accrualConditionsFor(plan), [0, 1, 2, 3], { runH: h1, last: series[0] });
  // The stored telemetry reached 12 h; the run stopped at 12 h exactly, not at the sample after it.
  expect(oracle.runH).toBeGreaterThanOrEqual(12 - HOURS_EPS);
  const beforeLast = accrueSeries(series.slice(1, -1), accrualConditionsFor(plan), [0, 1, 2, 3], { runH: h1, last: series[0] });
  expect(beforeLast.runH).toBeLessThan(12);
  expect(done.stressHours).toBe(12);
  // After the restart only the end-of-stress commands went out; no cmdId was ever sent twice.
  expect(sent.slice(sentBefore).map((x) => x.cmdId)).toEqual([`run:${runId}:cool:end`, `run:${runId}:off:end`]);
  const ids = sent.map((x) => x.cmdId);
  expect(new Set(ids).size).toBe(ids.length);
  expect(rig.state().sockets.every((s) => !s.biasOn)).toBe(true);
});
