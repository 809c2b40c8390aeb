/**
 * The real pieces a broker test drives, started once per test file: a fresh test database, the
 * Emberlot broker (rigs authenticated against the database), the server's telemetry feature
 * (ingest + RigLink over MQTT) and, on demand, schedulers, simulated rigs and chambers.
 *
 *   const db = await createTestDb();
 *   const rig = await insertMqttRig(db.ds, { code: 'OV-07', socketCount: 4, secret: 'ov07-secret' });
 *   const { runId } = await bookLoadedRun(db.ds, { rigId: rig.id, lotCode: 'HG2611-A', serials: [...], plan: {...}, run: { code: 'HTRB-2611-A' } });
 *   const stack = await startBrokerStack(db, { clientId: 'emberlot-server-x-test' });
 *   const sim = await stack.startRig(rig, { sockets: 4, mode: 'reverse', ... });
 *   const scheduler = stack.startScheduler();          // commands go through stack.spyLink into stack.sent
 *   await stack.untilRun(runId, 'stressing');
 *   afterAll(() => stack.stop());                       // schedulers, rigs, chambers, telemetry, broker, database
 *
 * Seed before `startBrokerStack` (as the suites always did): the telemetry feature starts reading at once.
 */
import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { createEmberlotBroker, type Authenticate, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { startRig, type RigConfig, type RigHandle } from '../../rig-simulator';
import { SimulatedChamber, type ChamberRigConfig } from '../../rig-simulator/chamber';
import type { CommandAck } from '../../shared/mqtt';
import { configFromEnv, type ServerConfig } from '../../server/config';
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
import { RunScheduler, type SchedulerOptions } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { pgPoolOf, startTelemetry, type TelemetryFeatureOptions } from '../../server/modules/telemetry/telemetry.feature';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import type { TestDb } from './db';

/** The server's own MQTT account in every broker test. */
export const STACK_SERVER = { username: 'emberlot-server', password: 'server-secret' };

/** The operator who presses start / measurements-done in the broker tests. */
export const TEST_OPERATOR = { id: randomUUID(), email: 'operator@test.example', name: 'Test operator', role: 'operator' as const };

/** A rig registered with MQTT credentials: what the simulator signs in with. */
export interface MqttRig {
  id: string;
  code: string;
  username: string;
  password: string;
}

/**
 * Registers a rig (max 200 °C / 800 V unless given) whose MQTT name is `rig-<code in lower case>`
 * and whose secret is `secret` (bcrypt cost 4). Other rig fields pass through.
 */
export async function insertMqttRig(
  ds: TestDb['ds'],
  rig: { code: string; secret: string; socketCount: number; name?: string } & Partial<Omit<RigEntity, 'code' | 'socketCount' | 'name'>>,
): Promise<MqttRig> {
  const { code, secret, name, ...fields } = rig;
  const username = `rig-${code.toLowerCase()}`;
  const m = ds.manager;
  const saved = await m.save(
    m.create(RigEntity, {
      name: name ?? `Oven ${code}`,
      maxTempC: 200,
      maxVoltageV: 800,
      ...fields,
      code,
      mqttUsername: username,
      mqttSecretHash: await bcrypt.hash(secret, 4),
      credentialsIssuedAt: new Date(),
    }),
  );
  return { id: saved.id, code, username, password: secret };
}

/** A plan's own fields; the rest (key, version, part HPD-2N140, no humidity, accept 0, the usual end points) are filled in. */
export type LoadedPlanFields = Pick<StressPlanEntity, 'name' | 'kind' | 'chamberC' | 'bias' | 'durationH' | 'readPointsH'> &
  Partial<StressPlanEntity>;

export interface LoadedRun {
  runId: string;
  plan: StressPlanEntity;
  lotId: string;
  deviceIds: string[];
}

/**
 * A run in `loading` on `rigId`: the demo part HPD-2N140, a lot of 100 with the devices `serials`
 * loaded in sockets 0, 1, … in that order, a plan whose sample size is the number of devices
 * (unless given), scheduled from now for `scheduledMs` (default 60 s). `deviceType`: a part already
 * registered (a second run in the same database), instead of registering HPD-2N140.
 */
export async function bookLoadedRun(
  ds: TestDb['ds'],
  opts: {
    rigId: string;
    lotCode: string;
    serials: string[];
    plan: LoadedPlanFields;
    run: { code: string; scheduledMs?: number };
    deviceType?: DeviceTypeEntity;
  },
): Promise<LoadedRun> {
  const m = ds.manager;
  const type =
    opts.deviceType ??
    (await m.save(
      m.create(
        DeviceTypeEntity,
        DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!,
      ),
    ));
  const lot = await m.save(m.create(LotEntity, { code: opts.lotCode, deviceTypeId: type.id, quantity: 100 }));
  const devices = await m.save(opts.serials.map((serial) => m.create(DeviceEntity, { lotId: lot.id, serial })));
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      deviceTypeId: type.id,
      humidityPct: null,
      sampleSize: devices.length,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
      ...opts.plan,
    }),
  );
  const run = await m.save(
    m.create(RunEntity, {
      code: opts.run.code,
      planId: plan.id,
      rigId: opts.rigId,
      state: 'loading',
      sampleSize: devices.length,
      stateChangedAt: new Date(),
      nextReadPoint: 1,
      scheduledStart: new Date(),
      scheduledEnd: new Date(Date.now() + (opts.run.scheduledMs ?? 60_000)),
    }),
  );
  await m.insert(RunLotEntity, { runId: run.id, lotId: lot.id });
  await m.insert(
    RunSocketEntity,
    devices.map((d, i) => ({ runId: run.id, deviceId: d.id, socketIndex: i })),
  );
  return { runId: run.id, plan, lotId: lot.id, deviceIds: devices.map((d) => d.id) };
}

/** Polls a run until its state is one of `state` (and `also` holds); the error says where it stood. */
export async function untilRunState(
  ds: TestDb['ds'],
  runId: string,
  state: string | string[],
  opts: {
    timeoutMs?: number;
    pollMs?: number;
    also?: (r: RunEntity) => boolean;
    describe?: (r: RunEntity) => string | Promise<string>;
  } = {},
): Promise<RunEntity> {
  const states = Array.isArray(state) ? state : [state];
  const deadline = Date.now() + (opts.timeoutMs ?? 20_000);
  const read = () => ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
  for (;;) {
    const r = await read();
    if (states.includes(r.state) && (opts.also?.(r) ?? true)) return r;
    if (Date.now() >= deadline) {
      const detail = opts.describe ? `; ${await opts.describe(r)}` : '';
      throw new Error(`run did not reach ${states.join(' or ')} (is ${r.state}, ${r.stressHours} h, ${r.cyclesDone} cycles${detail})`);
    }
    await new Promise((res) => setTimeout(res, opts.pollMs ?? 50));
  }
}

/** Polls until `cond` resolves true. */
export async function untilTrue(cond: () => Promise<boolean> | boolean, label: string, timeoutMs = 5000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await cond())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

export interface BrokerStackOptions {
  /** The server link's MQTT client id (one per suite, so a log names the suite). */
  clientId: string;
  /** Before the broker starts: listeners on ctx.events and the like. */
  onContext?: (ctx: AppContext) => void;
  /** Chambers' reports (chamber tests pass `chamberReportHandler(ctx, …)`). */
  onChamber?: (ctx: AppContext) => TelemetryFeatureOptions['onChamber'];
  /** Default: rigs from the database (createPgAuthenticate) and the server's STACK_SERVER account. */
  authenticate?: Authenticate;
  /** Config over `configFromEnv({})` + the test database. */
  config?: Partial<ServerConfig>;
}

export interface BrokerStack {
  db: TestDb;
  ctx: AppContext;
  broker: EmberlotBroker;
  /** `mqtt://127.0.0.1:<port>` of the broker. */
  url: string;
  /** Every command sent through `spyLink`, in order. */
  sent: Array<{ cmdId: string; cmd: RigCommandBody }>;
  /** The real MQTT link, writing each command down in `sent`. */
  spyLink: RigLink;
  /** A started scheduler (commands through `spyLink` unless `rigLink` is given; quiet; ambient checked on every pass). */
  startScheduler(opts?: SchedulerOptions): RunScheduler;
  /** A simulated rig signed in as `rig`, once connected. */
  startRig(rig: MqttRig, config: Omit<RigConfig, 'rigCode' | 'brokerUrl' | 'username' | 'password'>): Promise<RigHandle>;
  /** A simulated chamber signed in as `rig` (not waited for: chambers report from their first tick). */
  startChamber(rig: MqttRig, config: Omit<ChamberRigConfig, 'rigCode' | 'brokerUrl' | 'username' | 'password'>): SimulatedChamber;
  /** untilRunState on this stack's database. */
  untilRun(runId: string, state: string | string[], opts?: Parameters<typeof untilRunState>[3]): Promise<RunEntity>;
  /** Runs on stop, after the schedulers and before rigs and telemetry (a feature the test started). */
  onStop(fn: () => unknown): void;
  /** Stops everything started here, then drops the database. Safe after a failed start. */
  stop(): Promise<void>;
}

/** Starts the broker and the telemetry feature on `db` and waits for the server's link. */
export async function startBrokerStack(db: TestDb, opts: BrokerStackOptions): Promise<BrokerStack> {
  const ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config, ...opts.config });
  opts.onContext?.(ctx);
  const schedulers: RunScheduler[] = [];
  const rigs: RigHandle[] = [];
  const chambers: SimulatedChamber[] = [];
  const stops: Array<() => unknown> = [];
  let broker: EmberlotBroker | null = null;
  let stopTelemetry: (() => Promise<void>) | null = null;
  const sent: BrokerStack['sent'] = [];
  const spyLink: RigLink = {
    connected: () => ctx.services.rigLink!.connected(),
    send: (rigCode, cmd, sendOpts): Promise<CommandAck> => {
      sent.push({ cmdId: sendOpts!.cmdId!, cmd });
      return ctx.services.rigLink!.send(rigCode, cmd, sendOpts);
    },
  };
  const stop = async () => {
    for (const s of schedulers) await s.stop();
    for (const fn of stops) await fn();
    for (const r of rigs) await r.stop();
    for (const c of chambers) await c.stop();
    await stopTelemetry?.();
    await broker?.close();
    await db.drop();
  };
  try {
    broker = await createEmberlotBroker({
      port: 0,
      authenticate: opts.authenticate ?? createPgAuthenticate({ pool: pgPoolOf(ctx), server: STACK_SERVER, verifiedCacheSize: 10 }),
    });
    const url = `mqtt://127.0.0.1:${broker.port}`;
    stopTelemetry = await startTelemetry(ctx, {
      mqtt: { url, ...STACK_SERVER },
      clientId: opts.clientId,
      sweepEveryMs: 60_000,
      onChamber: opts.onChamber?.(ctx),
    });
    await untilTrue(() => ctx.services.rigLink?.connected() ?? false, 'server link');
    return {
      db,
      ctx,
      broker,
      url,
      sent,
      spyLink,
      startScheduler: (schedulerOpts = {}) => {
        const s = new RunScheduler(ctx, { rigLink: () => spyLink, log: () => undefined, ambientCheckEveryMs: 0, ...schedulerOpts });
        schedulers.push(s);
        s.start();
        return s;
      },
      startRig: async (rig, config) => {
        const h = startRig({ ...config, rigCode: rig.code, brokerUrl: url, username: rig.username, password: rig.password });
        rigs.push(h);
        await untilTrue(() => h.connected, 'simulated rig');
        return h;
      },
      startChamber: (rig, config) => {
        const c = new SimulatedChamber({ ...config, rigCode: rig.code, brokerUrl: url, username: rig.username, password: rig.password });
        chambers.push(c);
        c.start();
        return c;
      },
      untilRun: (runId, state, untilOpts) => untilRunState(db.ds, runId, state, untilOpts),
      onStop: (fn) => stops.push(fn),
      stop,
    };
  } catch (err) {
    await stop().catch(() => undefined);
    throw err;
  }
}
