/**
 * Temperature cycling in a chamber through the real pieces (issue #22 item 2): the broker, the
 * server's telemetry feature taking the chamber's own reports (topic `…/chamber`, zod-validated),
 * the simulated cycling chamber (rig-simulator/chamber.ts: air ramp, load lag, load-controlled
 * dwell) and the scheduler. The scheduler sends the plan's cycling programme; the server counts
 * cycles from the load temperature the chamber reports, holds at the read point in cycles (chamber
 * to room, devices out once the load is safe to open), resumes, and ends at the cycle target.
 */
import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { SimulatedChamber } from '../../rig-simulator/chamber';
import { countTcCycles, tcBands, tcCyclesToH, type TcProfile } from '../../shared/chamber/profile';
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
import { chamberReportHandler } from '../../server/modules/chamber/chamber-reports';
import { RunsService } from '../../server/modules/runs/runs.service';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import { type RigCommandBody, type RigLink } from '../../server/modules/telemetry/contracts';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestDb, type TestDb } from '../support/db';
import { recordTimeZero, setRigServiceDates } from '../support/permit';
import { waitFor } from './mqtt-test-helpers';

jest.setTimeout(90_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRET = 'tc01-chamber-secret';
// A short profile so the test runs in seconds: −20/+60 °C, 2 min dwell, 10 K/min (80 K: 8 min a ramp, 20 min a cycle).
const PROFILE: TcProfile = { lowC: -20, highC: 60, dwellMin: 2, rampKPerMin: 10, cycles: 6 };

let db: TestDb;
let eb: EmberlotBroker;
let ctx: AppContext;
let stopTelemetry: (() => Promise<void>) | null = null;
let chamber: SimulatedChamber;
let runId: string;
let rigId: string;
let scheduler: RunScheduler | null = null;
const sent: Array<{ cmdId: string; cmd: RigCommandBody }> = [];
const events: Array<{ type: string; readPointIndex?: number }> = [];

const spyLink: RigLink = {
  connected: () => ctx.services.rigLink!.connected(),
  send: (rigCode, cmd, opts): Promise<CommandAck> => {
    sent.push({ cmdId: opts!.cmdId!, cmd });
    return ctx.services.rigLink!.send(rigCode, cmd, opts);
  },
};
const run = () => db.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
const operator = { id: randomUUID(), email: 'operator@test.example', name: 'Test operator', role: 'operator' as const };

beforeAll(async () => {
  db = await createTestDb();
  const m = db.ds.manager;
  rigId = (
    await m.save(
      m.create(RigEntity, {
        code: 'TC-01',
        name: 'Cycling chamber 1',
        kind: 'chamber',
        socketCount: 50,
        maxTempC: 200,
        minTempC: -70,
        maxVoltageV: 0,
        mqttUsername: 'rig-tc-01',
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
  const lot = await m.save(m.create(LotEntity, { code: 'HG2611-T', deviceTypeId: type.id, quantity: 100 }));
  const devices = await m.save(['T0001', 'T0002', 'T0003'].map((serial) => m.create(DeviceEntity, { lotId: lot.id, serial })));
  const durationH = tcCyclesToH(PROFILE, PROFILE.cycles);
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'TC −20/+60 °C, 6 cycles',
      kind: 'tc',
      deviceTypeId: type.id,
      chamberC: PROFILE.highC,
      humidityPct: null,
      bias: { vcbV: null, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH,
      // Read points in cycles 0 / 3 / 6, as the plan's hours (cycles × the profile's period).
      readPointsH: [0, tcCyclesToH(PROFILE, 3), durationH],
      sampleSize: 3,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
      cycle: null,
      thermalCycle: PROFILE,
      acCondition: null,
    }),
  );
  const r = await m.save(
    m.create(RunEntity, {
      code: 'TC-2611-T',
      planId: plan.id,
      rigId,
      state: 'loading',
      sampleSize: 3,
      stateChangedAt: new Date(),
      nextReadPoint: 1,
      scheduledStart: new Date(),
      scheduledEnd: new Date(Date.now() + 600_000),
    }),
  );
  runId = r.id;
  await m.insert(RunLotEntity, { runId, lotId: lot.id });
  await m.insert(
    RunSocketEntity,
    devices.map((d, i) => ({ runId, deviceId: d.id, socketIndex: i })),
  );

  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  ctx.events.on('run-event', (e: { type: string; readPointIndex?: number }) => events.push(e));
  eb = await createEmberlotBroker({
    port: 0,
    authenticate: createPgAuthenticate({ pool: pgPoolOf(ctx), server: SERVER, verifiedCacheSize: 10 }),
  });
  stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, ...SERVER },
    clientId: 'emberlot-server-chamber-test',
    sweepEveryMs: 60_000,
    onChamber: chamberReportHandler(ctx, () => undefined),
  });
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
  // 10 chamber minutes per wall second, a report every 0.05 s: one every half chamber-minute.
  chamber = new SimulatedChamber({
    rigCode: 'TC-01',
    brokerUrl: `mqtt://127.0.0.1:${eb.port}`,
    username: 'rig-tc-01',
    password: SECRET,
    minutesPerWallSecond: 10,
    samplePeriodWallS: 0.05,
    tauMin: 1.5,
  });
  chamber.start();
});

afterAll(async () => {
  await scheduler?.stop();
  await chamber?.stop();
  await stopTelemetry?.();
  await eb?.close();
  await db?.drop();
});

async function until(state: string | string[], timeoutMs: number, also: (r: RunEntity) => boolean = () => true) {
  const states = Array.isArray(state) ? state : [state];
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const r = await run();
    if (states.includes(r.state) && also(r)) return r;
    await new Promise((res) => setTimeout(res, 100));
  }
  const r = await run();
  throw new Error(`run did not reach ${states.join(' or ')} (is ${r.state}, ${r.cyclesDone} cycles, ${r.stressHours} h)`);
}

test('a TC run counts its cycles from the chamber’s load temperature, holds at the read point in cycles and ends at its target', async () => {
  await setRigServiceDates(db.ds, rigId);
  await recordTimeZero(db.ds, runId);
  for (let k = 0; k < 100 && !(await db.ds.query('SELECT 1 FROM chamber_samples WHERE rig_id = $1 LIMIT 1', [rigId])).length; k++) {
    await new Promise((r) => setTimeout(r, 50));
  }
  await new RunsService(ctx).act(operator, runId, 'start', { rowVersion: (await run()).rowVersion, confirm: true });
  scheduler = new RunScheduler(ctx, { rigLink: () => spyLink, log: () => undefined, ambientCheckEveryMs: 0 });
  scheduler.start();

  // The read point at 3 cycles: the count stops there exactly and the chamber goes to room.
  const held = await until('read-hold', 40_000);
  expect(held.cyclesDone).toBe(3);
  expect(held.stressHours).toBeCloseTo(tcCyclesToH(PROFILE, 3), 9);
  const programme = sent.find((x) => x.cmd.type === 'setpoint' && x.cmd.profile);
  expect(programme?.cmd).toMatchObject({ type: 'setpoint', profile: { lowC: -20, highC: 60, dwellMin: 2, rampKPerMin: 10 } });
  expect(sent.some((x) => x.cmd.type === 'bias')).toBe(false); // nothing is biased in a chamber
  const safe = await until('read-hold', 30_000, (r) => r.biasRemovedAt !== null);
  expect(safe.holdPhase).toBe('safe-to-open');
  expect(sent.some((x) => x.cmd.type === 'setpoint' && x.cmd.setpointC === 25 && !x.cmd.profile)).toBe(true);
  expect(events.filter((e) => e.type === 'read-point-due').map((e) => e.readPointIndex)).toEqual([1]);
  const loads = await db.ds.query(`SELECT min(load_c) AS lo, max(load_c) AS hi FROM chamber_samples WHERE rig_id = $1`, [rigId]);
  const bands = tcBands(PROFILE);
  expect(Number(loads[0].hi)).toBeGreaterThanOrEqual(bands.hot.lowC);
  expect(Number(loads[0].hi)).toBeLessThanOrEqual(bands.hot.highC);
  expect(Number(loads[0].lo)).toBeLessThanOrEqual(bands.cold.highC);
  expect(Number(loads[0].lo)).toBeGreaterThanOrEqual(bands.cold.lowC);

  // Measured: back into the chamber, the programme again, and the end at 6 cycles.
  await new RunsService(ctx).act(operator, runId, 'measurements-done', { rowVersion: (await run()).rowVersion });
  const done = await until(['cooling', 'finished'], 60_000);
  expect(done.cyclesDone).toBe(6);
  expect(done.stressHours).toBeCloseTo(tcCyclesToH(PROFILE, 6), 9);
  const sockets = await db.ds.getRepository(RunSocketEntity).find({ where: { runId } });
  expect(sockets.map((s) => s.cyclesDone)).toEqual([6, 6, 6]);
  // The smallest load swing of the counted cycles: the Coffin–Manson ΔT (at least the profile's 80 K).
  expect(sockets[0].lastDTjLowC).toBeGreaterThanOrEqual(80);

  // The same count from the stored reports by the pure counter: the server's count is what the load did.
  const rows: Array<{ clock_s: number; load_c: number }> = await db.ds.query(
    `SELECT clock_s, load_c FROM chamber_samples WHERE rig_id = $1 ORDER BY seq`,
    [rigId],
  );
  const all = countTcCycles(
    PROFILE,
    rows.map((x) => [x.clock_s / 60, x.load_c] as const),
  );
  expect(all.cycles).toBeGreaterThanOrEqual(6); // the whole record includes the hold and any cycle after the end
  expect(chamber.state().programCycles).toBeGreaterThanOrEqual(5);
});
