/**
 * A temperature-humidity-bias run through the real pieces (broker, telemetry, scheduler, simulated
 * humidity chamber): at its read point and at the end of stress the hold turns humidity control off
 * at the test temperature and lowers the chamber in steps no lower than the dew point plus a margin
 * [pub: JESD22-A101D §2.1 — dry bulb above wet bulb throughout the ramp-down]. The simulated chamber
 * never saturates (no water on the parts), every stored sample has its dry bulb above its dew point
 * (Magnus, Alduchov & Eskridge 1996), and bias comes off only once the chamber is at the lab's
 * "remove bias at" temperature.
 */
import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { startRig, type RigHandle } from '../../rig-simulator';
import { DEW_POINT_MARGIN_K, dewPointC } from '../../shared/holds';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import {
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  StressPlanEntity,
} from '../../server/db/entities';
import { RunsService } from '../../server/modules/runs/runs.service';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import type { CommandAck } from '../../shared/mqtt';
import { createTestDb, type TestDb } from '../support/db';
import { permitFromLiveRig } from '../support/permit';
import { waitFor } from './mqtt-test-helpers';

jest.setTimeout(60_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRET = 'ov-h2-thb-secret';

let db: TestDb;
let eb: EmberlotBroker;
let ctx: AppContext;
let stopTelemetry: (() => Promise<void>) | null = null;
let rig: RigHandle;
let rigId: string;
let runId: string;
let scheduler: RunScheduler;
const sent: Array<{ cmdId: string; cmd: RigCommandBody }> = [];

const spyLink: RigLink = {
  connected: () => ctx.services.rigLink!.connected(),
  send: (rigCode, cmd, opts): Promise<CommandAck> => {
    sent.push({ cmdId: opts!.cmdId!, cmd });
    return ctx.services.rigLink!.send(rigCode, cmd, opts);
  },
};
const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
async function until(state: string, timeoutMs = 20_000) {
  const deadline = Date.now() + timeoutMs;
  let last = '';
  while (Date.now() < deadline) {
    last = (await run()).state;
    if (last === state) return;
    await new Promise((r) => setTimeout(r, 50));
  }
  const s = rig.state();
  throw new Error(`run did not reach ${state} (is ${last}; chamber ${s.chamberC} °C, RH ${s.humidityPct} %, set ${s.setpointC} °C)`);
}

beforeAll(async () => {
  db = await createTestDb();
  const m = db.ds.manager;
  rigId = (
    await m.save(
      m.create(RigEntity, {
        code: 'OV-H2',
        name: 'Humidity chamber 2',
        socketCount: 4,
        maxTempC: 150,
        maxVoltageV: 800,
        humidityCapable: true,
        maxHumidityPct: 95,
        mqttUsername: 'rig-ov-h2',
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
  const lot = await m.save(m.create(LotEntity, { code: 'HG2611-H', deviceTypeId: type.id, quantity: 100 }));
  const devices = await m.save(['H0001', 'H0002', 'H0003', 'H0004'].map((serial) => m.create(DeviceEntity, { lotId: lot.id, serial })));
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'THB 85/85 short',
      kind: 'thb',
      deviceTypeId: type.id,
      chamberC: 85,
      humidityPct: 85,
      bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: 4,
      readPointsH: [0, 2, 4],
      sampleSize: 4,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
    }),
  );
  runId = (
    await m.save(
      m.create(RunEntity, {
        code: 'THB-2611-H',
        planId: plan.id,
        rigId,
        state: 'loading',
        sampleSize: 4,
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

  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  eb = await createEmberlotBroker({
    port: 0,
    authenticate: createPgAuthenticate({ pool: pgPoolOf(ctx), server: SERVER, verifiedCacheSize: 10 }),
  });
  stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, ...SERVER },
    clientId: 'emberlot-server-thb-test',
    sweepEveryMs: 60_000,
  });
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
  // 1.5 stress hours per wall second, a sample every 0.1 s (540 stress s); the chamber lags 0.5 stress hour.
  rig = startRig({
    rigCode: 'OV-H2',
    brokerUrl: `mqtt://127.0.0.1:${eb.port}`,
    username: 'rig-ov-h2',
    password: SECRET,
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
  await waitFor(() => rig.connected, 5000, 'simulated rig');
});

afterAll(async () => {
  await scheduler?.stop();
  await rig?.stop();
  await stopTelemetry?.();
  await eb?.close();
  await db?.drop();
});

const operator = { id: randomUUID(), email: 'operator@test.example', name: 'Test operator', role: 'operator' as const };

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
  await new RunsService(ctx).act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  scheduler = new RunScheduler(ctx, { rigLink: () => spyLink, log: () => undefined, ambientCheckEveryMs: 0 });
  scheduler.start();
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
  await new RunsService(ctx).act(operator, runId, 'measurements-done', { rowVersion: (await run()).rowVersion });
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
  const cools = sent.filter((x) => x.cmdId.includes(':cool:'));
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
