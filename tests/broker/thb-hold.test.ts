/**
 * A temperature-humidity-bias run through the real pieces (broker, telemetry, scheduler, simulated
 * humidity chamber): at its read point and at the end of stress the hold turns humidity control off
 * at the test temperature and lowers the chamber in steps no lower than the dew point plus a margin
 * [pub: JESD22-A101D §2.1 — dry bulb above wet bulb throughout the ramp-down]. The simulated chamber
 * never saturates (no water on the parts), every stored sample has its dry bulb above its dew point
 * (Magnus, Alduchov & Eskridge 1996), and bias comes off only once the chamber is at the lab's
 * "remove bias at" temperature.
 */
import type { RigHandle } from '../../rig-simulator';
import { DEW_POINT_MARGIN_K, dewPointC } from '../../shared/holds';
import { RunEntity } from '../../server/db/entities';
import { RunsService } from '../../server/modules/runs/runs.service';
import { createTestDb } from '../support/db';
import { TEST_OPERATOR as operator, bookLoadedRun, insertMqttRig, startBrokerStack, type BrokerStack } from '../support/broker-stack';
import { permitFromLiveRig } from '../support/permit';

jest.setTimeout(60_000);

let stack: BrokerStack;
let db: BrokerStack['db'];
let rig: RigHandle;
let rigId: string;
let runId: string;

const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
const until = (state: string, timeoutMs = 20_000) =>
  stack.untilRun(runId, state, {
    timeoutMs,
    describe: () => {
      const s = rig.state();
      return `chamber ${s.chamberC} °C, RH ${s.humidityPct} %, set ${s.setpointC} °C`;
    },
  });

beforeAll(async () => {
  const testDb = await createTestDb();
  const ovH2 = await insertMqttRig(testDb.ds, {
    code: 'OV-H2',
    name: 'Humidity chamber 2',
    socketCount: 4,
    maxTempC: 150,
    humidityCapable: true,
    maxHumidityPct: 95,
    secret: 'ov-h2-thb-secret',
  });
  rigId = ovH2.id;
  runId = (
    await bookLoadedRun(testDb.ds, {
      rigId,
      lotCode: 'HG2611-H',
      serials: ['H0001', 'H0002', 'H0003', 'H0004'],
      plan: {
        name: 'THB 85/85 short',
        kind: 'thb',
        chamberC: 85,
        humidityPct: 85,
        bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
        durationH: 4,
        readPointsH: [0, 2, 4],
      },
      run: { code: 'THB-2611-H' },
    })
  ).runId;
  stack = await startBrokerStack(testDb, { clientId: 'emberlot-server-thb-test' });
  db = stack.db;
  // 1.5 stress hours per wall second, a sample every 0.1 s (540 stress s); the chamber lags 0.5 stress hour.
  rig = await stack.startRig(ovH2, {
    sockets: 4,
    mode: 'reverse',
    chamberC: 25,
    setpointC: 25,
    humidityCapable: true,
    biasOn: false,
    vV: 0,
    stressHoursPerWallSecond: 1.5,
    samplePeriodWallS: 0.1,
    reconnectWallS: 0.1,
    resendAfterWallS: 1,
  });
});

afterAll(() => stack?.stop());

interface Row {
  seq: number;
  chamberC: number;
  rh: number;
  biased: boolean;
}
async function stored(): Promise<Row[]> {
  const rows: Array<Record<string, unknown>> = await db.ds.query(
    `SELECT b.seq, b.chamber_c, b.humidity_pct, bool_or(s.bias_on) AS biased
     FROM telemetry_batches b JOIN telemetry_samples s ON s.rig_id = b.rig_id AND s.seq = b.seq
     WHERE b.rig_id = $1 GROUP BY b.seq, b.chamber_c, b.humidity_pct ORDER BY b.seq`,
    [rigId],
  );
  return rows.map((r) => ({ seq: Number(r.seq), chamberC: Number(r.chamber_c), rh: Number(r.humidity_pct), biased: Boolean(r.biased) }));
}

test('THB read point and end of stress: humidity off first, a stepped ramp, never at the dew point; bias off at 35 °C', async () => {
  // The start permit: service dates, time-zero readings, and the sockets from the rig's own stored telemetry.
  await permitFromLiveRig(db.ds, runId, rigId);
  await new RunsService(stack.ctx).act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  const scheduler = stack.startScheduler();
  await until('stressing');
  await until('read-hold');
  const waitBiasOff = async () => {
    const deadline = Date.now() + 20_000;
    while ((await run()).biasRemovedAt === null) {
      if (Date.now() > deadline)
        throw new Error(`bias never came off (chamber ${rig.state().chamberC} °C, RH ${rig.state().humidityPct} %)`);
      await new Promise((r) => setTimeout(r, 50));
    }
  };
  await waitBiasOff();
  await new RunsService(stack.ctx).act(operator, runId, 'measurements-done', { rowVersion: (await run()).rowVersion });
  await until('stressing');
  await until('cooling');
  await until('finished', 30_000);
  await scheduler.idle();

  // The simulated chamber never saturated: no water condensed on the parts.
  expect(rig.state().condensationS).toBe(0);
  // Every stored sample: dry bulb above the dew point of its own reading (waiting for the unbiased one after the end).
  let rows = await stored();
  for (let k = 0; k < 100 && rows[rows.length - 1].biased; k++) {
    await new Promise((r) => setTimeout(r, 50));
    rows = await stored();
  }
  const gaps = rows.filter((r) => r.rh > 0).map((r) => r.chamberC - dewPointC(r.chamberC, r.rh));
  expect(rows.length).toBeGreaterThan(20);
  expect(Math.min(...gaps)).toBeGreaterThan(0);

  // The commands: each hold first turns humidity off at the test temperature (85 °C), then steps down.
  const cools = stack.sent.filter((x) => x.cmdId.includes(':cool:'));
  const rp1 = cools.filter((x) => x.cmdId.includes(':cool:rp1:')).map((x) => x.cmd);
  const end = cools.filter((x) => x.cmdId.includes(':cool:end:')).map((x) => x.cmd);
  for (const steps of [rp1, end]) {
    expect(steps[0]).toEqual({ type: 'setpoint', setpointC: 85, humidityPct: null });
    const set = steps.map((c) => (c.type === 'setpoint' ? c.setpointC : NaN));
    // How many steps depends on how often the scheduler passes (a loaded machine batches samples):
    // at least the hold at 85 °C and the last step to room ambient.
    expect(set.length).toBeGreaterThanOrEqual(2);
    expect([...set].sort((a, b) => b - a)).toEqual(set); // only ever down
    expect(set[set.length - 1]).toBe(25);
  }
  // Bias came off (each hold) only with the chamber at or below 35 °C and the dew point below it by the margin.
  const offs = rows.filter((r, i) => i > 0 && rows[i - 1].biased && !r.biased);
  expect(offs.length).toBeGreaterThanOrEqual(2);
  for (const r of offs) {
    expect(r.chamberC).toBeLessThanOrEqual(35);
    expect(r.chamberC - dewPointC(r.chamberC, r.rh)).toBeGreaterThanOrEqual(DEW_POINT_MARGIN_K);
  }
});
