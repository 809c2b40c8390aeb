/**
 * One stress run through the REAL processes with a fault injected mid-run, and the books checked
 * afterwards. The broker (broker/main.ts) and the API server (server/main.ts) run as child
 * processes on a test database; the rig is rig-simulator's startRig in the test process on an
 * accelerated clock. The run is started and its read point signed off through the HTTP API as an
 * operator would; the scheduler inside the API process heats, biases, accrues hours from the
 * stored telemetry, holds at the read point and cools.
 *
 * Afterwards (reconcile):
 *  - every sample the rig published is stored exactly once: the stored seq set equals 1..lastSeq,
 *    one telemetry_samples row per socket, and the chamber rollups count each message once;
 *  - the run's hours equal the accrual rule (shared/scheduling accrueSeries) applied to the stored
 *    rows of each stressing phase (ambient reached → read point / end of stress), run and sockets;
 *  - no read point lost: one read-hold at 4 h and one end of stress at 12 h, each within one
 *    sample of its target, and the run finished;
 *  - no duplicate command changed the rig: the rig applied exactly the expected commands, each
 *    cmdId once (repeats were answered from the rig's memory), nothing refused.
 */
import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import { startRig, type RigConfig, type RigHandle } from '../../rig-simulator';
import { HOURS_EPS, accrualConditionsFor, accrueSeries, type ClockSample } from '../../shared/scheduling';
import type { DbConfig } from '../../server/config';
import { DeviceTypeEntity, RunEntity, RunSocketEntity, StressPlanEntity, UserEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import {
  apiClient,
  freePort,
  stackEnv,
  type Env,
  startApiProcess,
  startBrokerProcess,
  type ApiClient,
  type NodeProcess,
  type StackPorts,
  stopAllProcesses,
} from '../support/processes';
import type { TestDb } from '../support/db';
import { installRigCommandLog, type RigCommandLog } from './rig-command-log';
import { recordTimeZero, setRigServiceDates } from '../support/permit';
import { bookLoadedRun, insertMqttRig } from '../support/broker-stack';

export const OPERATOR = { email: 'operator@faults.example', password: 'faults-operator-pass' };
/** Stress hours per wall second and wall seconds per sample: 0.2 stress hour per sample. */
export const CLOCK = { stressHoursPerWallSecond: 2, samplePeriodWallS: 0.1 };
export const SAMPLE_H = CLOCK.stressHoursPerWallSecond * CLOCK.samplePeriodWallS;
export const PLAN = { chamberC: 125, vcbV: 80, durationH: 12, readPointsH: [0, 4, 12] };
export const SOCKETS = 4;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

// ---------------------------------------------------------------------------------------------
// The stack

type Exit = { code: number | null; signal: NodeJS.Signals | null };

export interface FaultStack {
  env: Env;
  ports: StackPorts;
  broker: NodeProcess;
  api: NodeProcess;
  client: ApiClient;
  brokerUrl: string;
  /** Wall seconds from spawning both processes to both printing their ready line. */
  startupS: number;
  /** Kill the broker with `signal`, wait `downMs`, start it again on the same port; how the old one ended. */
  restartBroker(signal: NodeJS.Signals, downMs: number): Promise<Exit>;
  restartApi(signal: NodeJS.Signals, downMs: number): Promise<Exit>;
}

export async function startFaultStack(db: DbConfig): Promise<FaultStack> {
  const ports: StackPorts = { api: await freePort(), mqtt: await freePort(), smtp: await freePort() };
  const env = stackEnv(db, ports);
  const t0 = Date.now();
  // Both cold starts at once: swc compiles each process's sources on its own.
  const [broker, api] = await Promise.all([startBrokerProcess(env), startApiProcess(env)]);
  const startupS = Math.round((Date.now() - t0) / 100) / 10;
  const client = apiClient(`http://127.0.0.1:${ports.api}`);
  const stack: FaultStack = {
    env,
    ports,
    broker,
    api,
    client,
    brokerUrl: `mqtt://127.0.0.1:${ports.mqtt}`,
    startupS,
    async restartBroker(signal, downMs) {
      const exit = await stack.broker.kill(signal);
      await sleep(downMs);
      stack.broker = await startBrokerProcess(env);
      return exit;
    },
    async restartApi(signal, downMs) {
      const exit = await stack.api.kill(signal);
      await sleep(downMs);
      stack.api = await startApiProcess(env);
      return exit;
    },
  };
  return stack;
}

// ---------------------------------------------------------------------------------------------
// Database fixtures

/** The operator who starts runs and signs off read points, and the device type (once per database). */
export async function seedBase(ds: DataSource): Promise<DeviceTypeEntity> {
  const m = ds.manager;
  await m.insert(UserEntity, {
    email: OPERATOR.email,
    name: 'Faults operator',
    role: 'operator',
    passwordHash: await bcrypt.hash(OPERATOR.password, 4),
  });
  return m.save(
    m.create(
      DeviceTypeEntity,
      DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!,
    ),
  );
}

export interface RunFixture {
  rigCode: string;
  rigId: string;
  secret: string;
  runId: string;
  plan: StressPlanEntity;
}

/** A rig (with MQTT credentials), a lot of 4 devices, an HTRB plan and a run in `loading` with every socket loaded. */
export async function createFaultRun(ds: DataSource, type: DeviceTypeEntity, rigCode: string): Promise<RunFixture> {
  const secret = `${rigCode.toLowerCase()}-faults-secret`;
  const rig = await insertMqttRig(ds, { code: rigCode, secret, socketCount: SOCKETS });
  const { runId, plan } = await bookLoadedRun(ds, {
    rigId: rig.id,
    lotCode: `HG-${rigCode}`,
    serials: [1, 2, 3, 4].map((k) => `${rigCode}-${String(k).padStart(3, '0')}`),
    deviceType: type,
    plan: {
      name: `HTRB 125 °C faults ${rigCode}`,
      kind: 'htrb',
      chamberC: PLAN.chamberC,
      bias: { vcbV: PLAN.vcbV, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: PLAN.durationH,
      readPointsH: PLAN.readPointsH,
    },
    run: { code: `HTRB-F-${rigCode}`, scheduledMs: 3_600_000 },
  });
  // The start permit's dates and time-zero readings; the sockets report comes from the simulated rig.
  await setRigServiceDates(ds, rig.id);
  await recordTimeZero(ds, runId);
  return { rigCode, rigId: rig.id, secret, runId, plan };
}

// ---------------------------------------------------------------------------------------------
// The simulated rig

export interface SimRig {
  rig: RigHandle;
  /** The config object startRig reads on every tick; `endSampling()` sets its maxSamples. */
  config: RigConfig;
  /** Stop taking new samples (the rig stays connected and flushes its outbox). */
  endSampling(): void;
}

export function startSimRig(brokerUrl: string, fx: RunFixture, extra: Partial<RigConfig> = {}): SimRig {
  const config: RigConfig = {
    rigCode: fx.rigCode,
    brokerUrl,
    username: `rig-${fx.rigCode.toLowerCase()}`,
    password: fx.secret,
    sockets: SOCKETS,
    mode: 'reverse',
    lots: ['HPD-L2403'],
    chamberC: 25,
    setpointC: 25,
    biasOn: false,
    vV: 0,
    ...CLOCK,
    reconnectWallS: 0.2,
    resendAfterWallS: 1,
    seed: 7,
    ...extra,
  };
  const rig = startRig(config);
  return {
    rig,
    config,
    endSampling: () => {
      // startRig compares stats.samples with config.maxSamples on every tick.
      config.maxSamples = rig.stats.samples;
    },
  };
}

// ---------------------------------------------------------------------------------------------
// One fault file's set-up (the faults-*.test.ts files)

export interface FaultSuite {
  ds: DataSource;
  stack: FaultStack;
  log: RigCommandLog;
  /** The device type seedBase registered. */
  type: DeviceTypeEntity;
  /** startSimRig on this stack's broker; `stop()` stops it. */
  startSimRig(fx: RunFixture, extra?: Partial<RigConfig>): SimRig;
  /**
   * One run on a new rig `rigCode` (createFaultRun) with its simulated rig (`sim`: config over
   * startSimRig's), driven through the plan with the fault `fault(sim)` gives (null: none), then
   * reconciled as `scenario`. The figures come back unprinted and unchecked: the test does both.
   */
  runScenario(
    rigCode: string,
    scenario: string,
    opts: { fault: (sim: SimRig) => FaultPoint | null; timeoutMs: number; sim?: Partial<RigConfig> },
  ): Promise<{ fx: RunFixture; sim: SimRig; f: Figures }>;
  /** The simulated rigs, every process, the command log, then `db.drop()`. Safe after a failed start. */
  stop(): Promise<void>;
}

/**
 * What every fault file starts once, as startBrokerStack (tests/support/broker-stack.ts) does for the
 * in-process suites, with the broker and API server as processes: the rigs' command log, the
 * operator and device type (seedBase) on `db`, both processes, the operator signed in. `db` is a
 * createTestDb() or anything shaped like it (faults-postgres.test.ts: its own cluster).
 */
export async function startFaultSuite(db: Pick<TestDb, 'ds' | 'config' | 'drop'>): Promise<FaultSuite> {
  const log = installRigCommandLog();
  const sims: SimRig[] = [];
  const stop = async () => {
    for (const sim of sims) await sim.rig.stop();
    await stopAllProcesses(3000);
    log.uninstall();
    await db.drop();
  };
  try {
    const type = await seedBase(db.ds);
    const stack = await startFaultStack(db.config);
    await stack.client.signIn(OPERATOR.email, OPERATOR.password);
    const startSim = (fx: RunFixture, extra?: Partial<RigConfig>) => {
      const sim = startSimRig(stack.brokerUrl, fx, extra);
      sims.push(sim);
      return sim;
    };
    return {
      ds: db.ds,
      stack,
      log,
      type,
      startSimRig: startSim,
      runScenario: async (rigCode, scenario, o) => {
        const started = { at: Date.now(), counters: await ingestCounters(db.ds) };
        const fx = await createFaultRun(db.ds, type, rigCode);
        const sim = startSim(fx, o.sim);
        const drive = await driveRun(db.ds, stack, fx, sim, o.fault(sim), o.timeoutMs);
        const f = await reconcile(db.ds, scenario, fx, sim, log, drive, started);
        return { fx, sim, f };
      },
      stop,
    };
  } catch (err) {
    await stop().catch(() => undefined);
    throw err;
  }
}

// ---------------------------------------------------------------------------------------------
// Waiting on the database (tolerates a database that is down for a while)

export async function runRow(ds: DataSource, runId: string): Promise<RunEntity | null> {
  try {
    return await ds.getRepository(RunEntity).findOneBy({ id: runId });
  } catch {
    return null;
  }
}

export async function waitRun(
  ds: DataSource,
  runId: string,
  pred: (r: RunEntity) => boolean,
  timeoutMs: number,
  label: string,
  diag: () => string = () => '',
): Promise<RunEntity> {
  const deadline = Date.now() + timeoutMs;
  let last: RunEntity | null = null;
  while (Date.now() < deadline) {
    const r = await runRow(ds, runId);
    if (r) last = r;
    if (r && pred(r)) return r;
    await sleep(100);
  }
  throw new Error(
    `run did not reach "${label}" within ${timeoutMs} ms (state ${last?.state}, ${last?.stressHours} h, accrued to seq ${last?.accruedToSeq}) ${diag()}`,
  );
}

export async function waitUntil(cond: () => boolean | Promise<boolean>, timeoutMs: number, label: string): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await cond()) return;
    await sleep(50);
  }
  throw new Error(`timed out after ${timeoutMs} ms waiting for ${label}`);
}

/** POST a run action with the current rowVersion; a 409 (the scheduler moved the run meanwhile) is retried. */
export async function runAction(ds: DataSource, client: ApiClient, runId: string, action: 'start' | 'measurements-done'): Promise<void> {
  let last = '';
  for (let k = 0; k < 20; k++) {
    const r = await runRow(ds, runId);
    if (r) {
      const res = await client
        .request('POST', `/api/runs/${runId}/${action}`, { rowVersion: r.rowVersion, ...(action === 'start' ? { confirm: true } : {}) })
        .catch((e: Error) => ({ status: 0, body: e.message }));
      if (res.status === 200) return;
      last = `${res.status} ${JSON.stringify(res.body)}`;
    }
    await sleep(250);
  }
  throw new Error(`${action} refused: ${last}`);
}

// ---------------------------------------------------------------------------------------------
// Driving one run with a fault

export interface FaultPoint {
  /** Inject the fault in this stressing phase (1: before the 4 h read point, 2: after it) … */
  phase: 1 | 2;
  /** … once the run has accrued at least this many hours. */
  atH: number;
  inject: () => Promise<void>;
}

export interface DriveResult {
  /** Run hours when the fault was injected. */
  faultAtH: number | null;
  /** Wall seconds the injection took (kill → process ready again, database back, …). */
  outageS: number | null;
}

/**
 * Start the run through the API, inject the fault at its point, sign off the 4 h read point once
 * the rig shows bias off and the chamber set to ambient, wait for `finished`, then end sampling
 * and let the rig's outbox drain.
 */
export async function driveRun(
  ds: DataSource,
  stack: FaultStack,
  fx: RunFixture,
  sim: SimRig,
  fault: FaultPoint | null,
  budgetMs: number,
): Promise<DriveResult> {
  const t0 = Date.now();
  const left = () => Math.max(1000, budgetMs - (Date.now() - t0));
  const diag = () =>
    `; rig seq ${sim.rig.lastSeq()}, unconfirmed ${sim.rig.outbox.size}, connected ${sim.rig.connected}, setpoint ${sim.rig.state().setpointC}, chamber ${sim.rig.state().chamberC.toFixed(1)}`;
  await waitUntil(() => sim.rig.connected, left(), `${fx.rigCode} connected`);
  await runAction(ds, stack.client, fx.runId, 'start');
  let faultAtH: number | null = null;
  let outageS: number | null = null;
  const timed = async (fn: () => Promise<void>) => {
    const t = Date.now();
    await fn();
    return Math.round((Date.now() - t) / 100) / 10;
  };
  const phase1 = (r: RunEntity) => r.state === 'stressing' && r.nextReadPoint === 1;
  const phase2 = (r: RunEntity) => r.state === 'stressing' && r.nextReadPoint === 2;
  if (fault?.phase === 1) {
    const r = await waitRun(
      ds,
      fx.runId,
      (x) => (phase1(x) && x.stressHours >= fault.atH) || x.state === 'read-hold',
      left(),
      `phase 1 at ${fault.atH} h`,
      diag,
    );
    faultAtH = r.stressHours;
    outageS = await timed(fault.inject);
  }
  await waitRun(ds, fx.runId, (x) => x.state === 'read-hold', left(), 'read-hold at 4 h', diag);
  // The operator measures once the rig shows the bias removed and the oven going to ambient.
  await waitUntil(
    () => sim.rig.state().sockets.every((s) => !s.biasOn) && sim.rig.state().setpointC === 25,
    left(),
    'bias off and set point 25 °C at the rig',
  );
  await runAction(ds, stack.client, fx.runId, 'measurements-done');
  if (fault?.phase === 2) {
    const r = await waitRun(
      ds,
      fx.runId,
      (x) => (phase2(x) && x.stressHours >= fault.atH) || ['cooling', 'finished'].includes(x.state),
      left(),
      `phase 2 at ${fault.atH} h`,
      diag,
    );
    faultAtH = r.stressHours;
    outageS = await timed(fault.inject);
  }
  await waitRun(ds, fx.runId, (x) => x.state === 'finished', left(), 'finished', diag);
  sim.endSampling();
  await sim.rig.drained(left());
  return { faultAtH, outageS };
}

// ---------------------------------------------------------------------------------------------
// Reconciliation

export interface Figures {
  scenario: string;
  rig: string;
  published: number;
  stored: number;
  duplicateRows: number;
  missing: number;
  /** The first few seqs published but not stored (or stored but never published). */
  missingSeqs: number[];
  resentByRig: number;
  /** Re-sent samples that reached the database again and were recognised as already stored. */
  duplicatesAbsorbed: number;
  ingestDropped: number;
  hoursAccrued: number;
  hoursExpected: number;
  socketHoursAccrued: number[];
  socketHoursExpected: number[];
  readPointH: number | null;
  endH: number | null;
  readPoints: number;
  commandsApplied: number;
  commandDeliveries: number;
  cmdIdsAppliedTwice: number;
  faultAtH: number | null;
  outageS: number | null;
  wallS: number;
}

async function count(ds: DataSource, sql: string, params: unknown[]): Promise<number> {
  const [{ n }] = await ds.query(sql, params);
  return Number(n ?? 0);
}

async function storedSamples(ds: DataSource, rigId: string, fromSeq: number, toSeq: number): Promise<ClockSample[]> {
  const b: Array<Record<string, unknown>> = await ds.query(
    `SELECT seq, stress_clock_s, chamber_c, humidity_pct FROM telemetry_batches WHERE rig_id = $1 AND seq BETWEEN $2 AND $3 ORDER BY seq`,
    [rigId, fromSeq, toSeq],
  );
  const s: Array<Record<string, unknown> & { bias_on: boolean; tripped: boolean }> = await ds.query(
    `SELECT seq, socket, v_v, bias_on, tripped FROM telemetry_samples WHERE rig_id = $1 AND seq BETWEEN $2 AND $3 ORDER BY seq, socket`,
    [rigId, fromSeq, toSeq],
  );
  const bySeq = new Map<number, ClockSample['sockets']>();
  for (const y of s) {
    const k = Number(y.seq);
    const l = bySeq.get(k) ?? [];
    l.push({ socket: Number(y.socket), vV: Number(y.v_v), biasOn: y.bias_on, tripped: y.tripped });
    bySeq.set(k, l);
  }
  return b.map((x) => ({
    seq: Number(x.seq),
    clockS: Number(x.stress_clock_s),
    chamberC: Number(x.chamber_c),
    humidityPct: x.humidity_pct === null ? null : Number(x.humidity_pct),
    sockets: bySeq.get(Number(x.seq)) ?? [],
  }));
}

/** The audit trail of the run's stressing phases: [start seq, end seq] pairs. */
async function phases(ds: DataSource, runId: string) {
  const rows: Array<{ action: string; details: Record<string, unknown> }> = await ds.query(
    `SELECT action, details FROM audit_log WHERE entity = 'run' AND entity_id = $1 AND action IN ('run.ambient-reached', 'run.read-point', 'run.stress-complete') ORDER BY id`,
    [runId],
  );
  return rows;
}

/** The ingest's durable counters (system_counters); the figures report the change over a scenario. */
export async function ingestCounters(ds: DataSource): Promise<{ duplicates: number; dropped: number }> {
  const rows: Array<{ name: string; value: string }> = await ds.query(
    `SELECT name, value FROM system_counters WHERE name IN ('ingest_duplicates', 'ingest_dropped')`,
  );
  const v = (n: string) => Number(rows.find((r) => r.name === n)?.value ?? 0);
  return { duplicates: v('ingest_duplicates'), dropped: v('ingest_dropped') };
}

export async function reconcile(
  ds: DataSource,
  scenario: string,
  fx: RunFixture,
  sim: SimRig,
  log: RigCommandLog,
  drive: DriveResult,
  started: { at: number; counters: { duplicates: number; dropped: number } },
): Promise<Figures> {
  const rig = sim.rig;
  const published = rig.lastSeq();
  const seqRows: Array<{ seq: string }> = await ds.query('SELECT seq FROM telemetry_batches WHERE rig_id = $1 ORDER BY seq', [fx.rigId]);
  const seqs = seqRows.map((r) => Number(r.seq));
  const seqSet = new Set(seqs);
  const missing = Array.from({ length: published }, (_, k) => k + 1).filter((s) => !seqSet.has(s));
  const extra = seqs.filter((s) => s < 1 || s > published);
  const sampleRows = await count(ds, 'SELECT count(*) AS n FROM telemetry_samples WHERE rig_id = $1', [fx.rigId]);
  // The API writes the rollups it holds every EMBERLOT_ROLLUP_FLUSH_MS (500 ms here): give it a few.
  const rollupsOf = () => count(ds, 'SELECT sum(n) AS n FROM telemetry_rollups WHERE rig_id = $1 AND socket = -1', [fx.rigId]);
  let rollupN = await rollupsOf();
  for (let k = 0; k < 40 && rollupN < seqs.length; k++) {
    await new Promise((r) => setTimeout(r, 100));
    rollupN = await rollupsOf();
  }
  const counters = await ingestCounters(ds);

  // Hours: the accrual rule over each stressing phase's stored rows, chained like the engine.
  const run = await ds.getRepository(RunEntity).findOneByOrFail({ id: fx.runId });
  const sockets = await ds.getRepository(RunSocketEntity).find({ where: { runId: fx.runId }, order: { socketIndex: 'ASC' } });
  const idx = sockets.map((s) => s.socketIndex);
  const cond = accrualConditionsFor(fx.plan);
  const trail = await phases(ds, fx.runId);
  let acc = { runH: 0, socketH: {} as Record<number, number>, tripped: [] as number[] };
  let readPointH: number | null = null;
  let endH: number | null = null;
  let readPoints = 0;
  for (let k = 0; k < trail.length; k++) {
    if (trail[k].action !== 'run.ambient-reached') continue;
    const end = trail[k + 1];
    if (!end || end.action === 'run.ambient-reached')
      throw new Error(`stressing phase from seq ${trail[k].details.seq} has no end in the audit trail`);
    const series = await storedSamples(ds, fx.rigId, Number(trail[k].details.seq), Number(end.details.seq));
    const from = { runH: acc.runH, socketH: acc.socketH, last: series[0], tripped: acc.tripped };
    const r = accrueSeries(series.slice(1), cond, idx, from);
    // A phase that stopped at a read point or the end is credited up to that target: the interval
    // that crossed it counts in proportion (the engine stops at the target exactly, never a sample late).
    const target =
      end.action === 'run.read-point' ? Number(end.details.readPointH) : end.action === 'run.stress-complete' ? fx.plan.durationH : null;
    if (target !== null && r.runH > target + HOURS_EPS) {
      const before = accrueSeries(series.slice(1, -1), cond, idx, from);
      if (!(before.runH < target)) throw new Error(`phase to ${target} h ran on past it: ${before.runH} h before its last sample`);
      const share = (target - before.runH) / (r.runH - before.runH);
      for (const k of idx) r.socketH[k] = before.socketH[k] + (r.socketH[k] - before.socketH[k]) * share;
      r.runH = target;
    } else if (target !== null && r.runH >= target - HOURS_EPS) r.runH = target;
    acc = { runH: r.runH, socketH: r.socketH, tripped: r.tripped };
    if (end.action === 'run.read-point') {
      readPoints++;
      readPointH = Number(end.details.stressHours);
      if (readPointH !== r.runH) throw new Error(`read point recorded ${readPointH} h; the stored telemetry gives ${r.runH} h`);
    } else endH = Number(end.details.stressHours);
  }

  const applied = log.applied(fx.rigCode);
  const ackedPerCmd = new Map<string, number>();
  for (const a of log.acks(fx.rigCode)) ackedPerCmd.set(a.cmdId, (ackedPerCmd.get(a.cmdId) ?? 0) + 1);
  return {
    scenario,
    rig: fx.rigCode,
    published,
    stored: seqs.length,
    duplicateRows: seqs.length - seqSet.size + (sampleRows - seqs.length * SOCKETS) + (rollupN - seqs.length),
    missing: missing.length + extra.length,
    missingSeqs: [...missing, ...extra].slice(0, 10),
    resentByRig: rig.stats.resent,
    duplicatesAbsorbed: counters.duplicates - started.counters.duplicates,
    ingestDropped: counters.dropped - started.counters.dropped,
    hoursAccrued: run.stressHours,
    hoursExpected: acc.runH,
    socketHoursAccrued: sockets.map((s) => s.accruedHours),
    socketHoursExpected: idx.map((k) => acc.socketH[k] ?? 0),
    readPointH,
    endH,
    readPoints,
    commandsApplied: applied.filter((a) => a.ok).length,
    commandDeliveries: log.deliveries(fx.rigCode).length,
    // A cmdId the rig applied twice would show as two first-acks; the rig's own counter must agree.
    cmdIdsAppliedTwice: rig.stats.commandsApplied - applied.filter((a) => a.ok).length,
    faultAtH: drive.faultAtH,
    outageS: drive.outageS,
    wallS: Math.round((Date.now() - started.at) / 100) / 10,
  };
}

/** The commands a run of this plan needs, in order, by the kind encoded in the scheduler's cmdId. */
export function expectedCommandKinds(): string[] {
  // A hold cools under bias first, then removes bias (shared/holds).
  return ['heat', 'bias', 'cool:rp1', 'off:rp1', 'heat', 'bias', 'cool:end', 'off:end'];
}

export function commandKind(runId: string, cmdId: string): string {
  const rest = cmdId.startsWith(`run:${runId}:`) ? cmdId.slice(`run:${runId}:`.length) : `other:${cmdId}`;
  return rest.startsWith('heat:') ? 'heat' : rest.startsWith('bias:') ? 'bias' : rest;
}

/** Shared assertions for every scenario. */
export function expectBooksBalance(f: Figures, fx: RunFixture, log: RigCommandLog, rig: RigHandle): void {
  expect({ missing: f.missing, duplicateRows: f.duplicateRows, stored: f.stored, ingestDropped: f.ingestDropped }).toEqual({
    missing: 0,
    duplicateRows: 0,
    stored: f.published,
    ingestDropped: 0,
  });
  expect(rig.outbox.size).toBe(0);
  expect(rig.stats.outboxOverflow).toBe(0);
  expect(f.hoursAccrued).toBe(f.hoursExpected);
  f.socketHoursAccrued.forEach((h, k) => expect(h).toBeCloseTo(f.socketHoursExpected[k], 9));
  // No read point lost: one hold at 4 h, the end at 12 h, each within one sample of its target.
  expect(f.readPoints).toBe(1);
  // Hours are float sums: a target counts as reached within HOURS_EPS (shared/scheduling/accrual.ts).
  expect(f.readPointH).toBeGreaterThanOrEqual(4 - HOURS_EPS);
  expect(f.readPointH!).toBeLessThan(4 + SAMPLE_H + 1e-9);
  expect(f.endH).toBe(f.hoursAccrued);
  expect(f.hoursAccrued).toBeGreaterThanOrEqual(PLAN.durationH - HOURS_EPS);
  expect(f.hoursAccrued).toBeLessThan(PLAN.durationH + SAMPLE_H + 1e-9);
  // Commands: exactly the run's commands were applied, each cmdId once, none refused.
  const applied = log.applied(fx.rigCode);
  expect(applied.map((a) => commandKind(fx.runId, a.cmdId))).toEqual(expectedCommandKinds());
  expect(applied.every((a) => a.ok)).toBe(true);
  expect(new Set(applied.map((a) => a.cmdId)).size).toBe(applied.length);
  expect(f.cmdIdsAppliedTwice).toBe(0);
  expect(rig.stats.commandsRefused).toBe(0);
  expect(rig.stats.commandsInvalid).toBe(0);
}

export function printFigures(f: Figures): void {
  // One line per scenario; docs/reliability.md quotes these.
  console.log(`[faults] ${JSON.stringify(f)}`);
}
