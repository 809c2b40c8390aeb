/**
 * Intermittent operating life through the real pieces: the broker, the server's telemetry feature
 * (ingest + RigLink), the rig simulator cycling its sockets and the scheduler. The bias command
 * carries the plan's on/off times; the simulated rig switches power, reads each cycle's junction
 * swing from its TSP and reports it with its cycle counters; ingest stores the reports
 * (telemetry_cycles); accrual counts the cycles within the ΔTj band and the run ends at its
 * cycle target exactly.
 */
import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { startRig, type RigHandle } from '../../rig-simulator';
import { cycleBand } from '../../shared/scheduling';
import type { CommandAck } from '../../shared/mqtt';
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
import { socketCyclesOfRun } from '../../server/modules/runs/cycles.data';
import { RunsService } from '../../server/modules/runs/runs.service';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import { type RigCommandBody, type RigLink } from '../../server/modules/telemetry/contracts';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestDb, type TestDb } from '../support/db';
import { permitFromLiveRig } from '../support/permit';
import { waitFor } from './mqtt-test-helpers';

jest.setTimeout(60_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRET = 'ov08-cycling-secret';
const TARGET_CYCLES = 30;

let db: TestDb;
let eb: EmberlotBroker;
let ctx: AppContext;
let stopTelemetry: (() => Promise<void>) | null = null;
let rig: RigHandle;
let runId: string;
let rigId: string;
let scheduler: RunScheduler | null = null;
const sent: Array<{ cmdId: string; cmd: RigCommandBody }> = [];

const spyLink: RigLink = {
  connected: () => ctx.services.rigLink!.connected(),
  send: (rigCode, cmd, opts): Promise<CommandAck> => {
    sent.push({ cmdId: opts!.cmdId!, cmd });
    return ctx.services.rigLink!.send(rigCode, cmd, opts);
  },
};
const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });

beforeAll(async () => {
  db = await createTestDb();
  const m = db.ds.manager;
  rigId = (
    await m.save(
      m.create(RigEntity, {
        code: 'OV-08',
        name: 'Cycling board 8',
        socketCount: 4,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-08',
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
  const lot = await m.save(m.create(LotEntity, { code: 'HG2611-C', deviceTypeId: type.id, quantity: 100 }));
  const devices = await m.save(['C0001', 'C0002', 'C0003'].map((serial) => m.create(DeviceEntity, { lotId: lot.id, serial })));
  // 30 cycles of 1 + 1 min = 1 h; ΔTj ≥ 100 K [pub: MIL-STD-750 method 1037 as used by AEC-Q101 — memory, confirm].
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'IOL ΔTj 100 K, 30 cycles',
      kind: 'iol',
      deviceTypeId: type.id,
      chamberC: 25,
      humidityPct: null,
      bias: { vcbV: null, vebV: null, vceV: 20, ibA: null, icA: 0.1, tolerancePct: 5 },
      durationH: 1,
      readPointsH: [0, 1],
      sampleSize: 3,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
      cycle: { onMin: 1, offMin: 1, deltaTjC: 100, cycles: TARGET_CYCLES },
    }),
  );
  const r = await m.save(
    m.create(RunEntity, {
      code: 'IOL-2611-C',
      planId: plan.id,
      rigId,
      state: 'loading',
      sampleSize: 3,
      stateChangedAt: new Date(),
      nextReadPoint: 1,
      scheduledStart: new Date(),
      scheduledEnd: new Date(Date.now() + 60_000),
    }),
  );
  runId = r.id;
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
    clientId: 'emberlot-server-cycling-test',
    sweepEveryMs: 60_000,
  });
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
  // 40 stress seconds per message (a sample every 0.1 s at 0.111 stress h per wall second): three
  // messages per 120 s cycle. The sockets sit on a poor heat sink (θca 40 K/W, τ 20 s) so a few
  // watts swing the junction by ~100 K; the rig steers the drive toward the planned swing.
  rig = startRig({
    rigCode: 'OV-08',
    brokerUrl: `mqtt://127.0.0.1:${eb.port}`,
    username: 'rig-ov-08',
    password: SECRET,
    sockets: 4,
    mode: 'powered',
    chamberC: 25,
    setpointC: 25,
    biasOn: false,
    thetaCaCPerW: 40,
    caseTauStressS: 20,
    stressHoursPerWallSecond: 40 / 0.1 / 3600,
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

async function until(state: string | string[], timeoutMs: number) {
  const states = Array.isArray(state) ? state : [state];
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (states.includes((await run()).state)) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  const r = await run();
  throw new Error(`run did not reach ${states.join(' or ')} (is ${r.state}, ${r.cyclesDone} cycles, ${r.stressHours} h)`);
}

test('a simulated IOL run cycles, counts the cycles within its ΔTj band and ends at its cycle target', async () => {
  const operator = { id: randomUUID(), email: 'operator@test.example', name: 'Test operator', role: 'operator' as const };
  // The start permit: service dates, time-zero readings, and the sockets from the rig's own stored telemetry.
  await permitFromLiveRig(db.ds, runId, rigId);
  await new RunsService(ctx).act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  scheduler = new RunScheduler(ctx, { rigLink: () => spyLink, log: () => undefined, ambientCheckEveryMs: 0 });
  scheduler.start();
  await until(['stressing', 'cooling', 'finished'], 15_000);
  // At a 25 °C chamber the cool-down is over at once: on a loaded machine the run may be finished
  // before a poll sees it cooling. Either way stress ended.
  await until(['cooling', 'finished'], 45_000);

  const bias = sent.find((x) => x.cmd.type === 'bias' && x.cmd.on);
  expect(bias?.cmd).toMatchObject({ sockets: [0, 1, 2], vV: 20, icA: 0.1, cycle: { onS: 60, offS: 60, deltaTjC: 100 } });

  const r = await run();
  expect(r.cyclesDone).toBe(TARGET_CYCLES);
  const sockets = await socketCyclesOfRun(db.ds.manager, runId);
  expect(sockets.map((s) => s.socket)).toEqual([0, 1, 2]);
  const band = cycleBand(100);
  for (const s of sockets) {
    expect(s.cyclesDone).toBeLessThanOrEqual(TARGET_CYCLES);
    expect(s.cyclesDone).toBeGreaterThan(TARGET_CYCLES - 5);
    // The first swings (before the rig's drive settled) were below 100 K: completed, not credited.
    expect(s.cyclesMissed).toBeGreaterThan(0);
    expect(s.lastDTjLowC!).toBeGreaterThanOrEqual(band.lowC);
    expect(s.lastDTjHighC!).toBeLessThanOrEqual(band.highC);
  }
  expect(Math.max(...sockets.map((s) => s.cyclesDone))).toBe(TARGET_CYCLES);
  // The rig's own counters ran on: what it completed is at least what was credited and missed.
  const counters = rig.state().sockets.map((s) => s.cycleCount ?? 0);
  for (const s of sockets) expect(counters[s.socket]).toBeGreaterThanOrEqual(s.cyclesDone + s.cyclesMissed);
  expect(counters[3]).toBe(0); // the empty socket never cycled
  // Stored reports: every message of the run carries a row per socket.
  const [{ n }] = await db.ds.query(
    `SELECT count(*)::int AS n FROM telemetry_cycles c JOIN rigs g ON g.id = c.rig_id WHERE g.code = 'OV-08'`,
  );
  expect(n).toBeGreaterThan(TARGET_CYCLES * 3 * 4 * 0.9);
  // Bias is off at the rig once stress ended, and with it the cycling program.
  await waitFor(() => rig.state().sockets.every((s) => !s.biasOn && !s.cycle), 5000, 'bias off at the rig');
});
