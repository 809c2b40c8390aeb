/**
 * Workers that fail over, end to end (issue #24 item 4): a broker and TWO API processes
 * (server/main.ts with EMBERLOT_WORKERS=elect) on one test database, a simulated rig stressing one
 * run (tests/faults/scenario.ts). The first API process leads (it runs ingest, protection and the
 * scheduler); the second serves the operator's HTTP requests as a standby. The leader is killed with
 * SIGKILL at the moment the rig receives the read-point hold's first command (`cool:rp1`): the command
 * is in flight, its ack goes to a dead process, and telemetry keeps coming every 0.1 s.
 *
 * Measured: how long until the standby leads and until a sample published after the kill is stored;
 * then the books as in every fault scenario (every published seq stored once, no gap, hours exact,
 * one read point, each command applied once) plus the command log's view of the in-flight command.
 * Used by tests/broker/failover-leader.test.ts (asserts) and bench/scenarios/failover-leader.ts.
 */
import mqtt from 'mqtt';
import type { DataSource } from 'typeorm';
import type { DbConfig } from '../../server/config';
import type { DeviceTypeEntity } from '../../server/db/entities';
import { topics } from '../../shared/mqtt';
import {
  apiClient,
  freePort,
  MQTT_SERVER,
  spawnTs,
  stackEnv,
  startBrokerProcess,
  START_TIMEOUT_MS,
  type ApiClient,
  type NodeProcess,
} from '../support/processes';
import type { RigCommandLog } from './rig-command-log';
import {
  OPERATOR,
  commandKind,
  createFaultRun,
  driveRun,
  expectedCommandKinds,
  ingestCounters,
  reconcile,
  startSimRig,
  type FaultStack,
  type Figures,
  type RunFixture,
  type SimRig,
} from './scenario';

const LEADS = /is leader since/;
const STANDS_BY = /standing by for the workers' leadership/;

interface HealthWorkers {
  mode: string;
  processId?: string;
  role: string;
  leader?: { processId: string; since: string } | null;
}

export interface FailoverFigures extends Figures {
  /** Wall seconds from the SIGKILL to the standby's /api/health answering role "leader". */
  leadSeconds: number;
  /** Wall seconds from the SIGKILL to the first stored sample published after it (ingest running again). */
  recoverySeconds: number;
  /** Commands the rig applied beyond one per wanted command (a cmdId twice, or one command under two cmdIds). */
  duplicateCommands: number;
  /** Deliveries at the rig, after the kill, of cmdIds the rig had already answered before it. */
  republishedAnswered: number;
  /** The in-flight command: its cmdId, how often the rig applied it, its row in the command log. */
  /**
   * The live floor on the standby: tiles of this rig its event stream (/api/floor/stream, opened on
   * B) sent while A led, after A's scheduler reached stress (events only A emitted: server/cluster/event-relay.ts).
   */
  standbyFloorTiles: number;
  inFlight: { cmdId: string; appliedAtRig: number; deliveredAtRig: number; state: string | null; publishes: number | null };
  health: { survivor: HealthWorkers | null; leaderRowHolder: string | null };
}

export interface FailoverRun {
  figures: FailoverFigures;
  fx: RunFixture;
  sim: SimRig;
  stop(): Promise<void>;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function health(client: ApiClient): Promise<HealthWorkers | null> {
  const r = await client.request<{ workers?: HealthWorkers }>('GET', '/api/health').catch(() => null);
  return r?.status === 200 ? (r.body.workers ?? null) : null;
}

/**
 * Run the scenario on `db` (migrated; seedBase done: OPERATOR and `type`). `log` must be installed
 * before the rig starts (installRigCommandLog). The caller stops the processes (`stop`).
 */
export async function runLeaderFailover(
  ds: DataSource,
  db: DbConfig,
  type: DeviceTypeEntity,
  log: RigCommandLog,
  opts: { rigCode?: string; budgetMs?: number; echo?: boolean } = {},
): Promise<FailoverRun> {
  const rigCode = opts.rigCode ?? 'OV-91';
  const ports = { api: await freePort(), mqtt: await freePort(), smtp: await freePort() };
  const apiB = await freePort();
  const envA = stackEnv(db, ports, { EMBERLOT_WORKERS: 'elect' });
  const envB = { ...envA, EMBERLOT_PORT: String(apiB) };
  const echo = opts.echo ?? process.env.EMBERLOT_FAULTS_ECHO === '1';
  const procs: NodeProcess[] = [];
  const stop = async () => {
    for (const p of procs) if (p.running) await p.kill('SIGTERM');
  };
  const broker = await startBrokerProcess(envA);
  procs.push(broker);
  // A first (it leads), then B (it stands by).
  const a = spawnTs('api-a', 'server/main.ts', envA, echo);
  procs.push(a);
  await a.waitForLine(LEADS, START_TIMEOUT_MS);
  const b = spawnTs('api-b', 'server/main.ts', envB, echo);
  procs.push(b);
  await b.waitForLine(STANDS_BY, START_TIMEOUT_MS);
  await b.waitForLine(/\[api\] listening on http:\/\//, START_TIMEOUT_MS);
  const client = apiClient(`http://127.0.0.1:${apiB}`);
  await client.signIn(OPERATOR.email, OPERATOR.password);

  const brokerUrl = `mqtt://127.0.0.1:${ports.mqtt}`;
  const fx = await createFaultRun(ds, type, rigCode);
  const started = { at: Date.now(), counters: await ingestCounters(ds) };
  const sim = startSimRig(brokerUrl, fx);
  const tiles = watchFloorTiles(`http://127.0.0.1:${apiB}`, client.cookie(), fx.rigId);

  // The kill: at the first delivery of the read-point hold's cool command to the rig.
  let killAt = 0;
  let inFlightCmdId = '';
  let answeredBeforeKill = new Set<string>();
  const observer = mqtt.connect(brokerUrl, {
    clientId: 'emberlot-failover-observer',
    username: MQTT_SERVER.username,
    password: MQTT_SERVER.password,
    protocolVersion: 4,
    reconnectPeriod: 200,
  });
  observer.on('message', (_topic, payload) => {
    if (killAt) return;
    const body = JSON.parse(payload.toString('utf8')) as { type?: string; cmdId?: string };
    if (body.type === 'stored' || !body.cmdId || commandKind(fx.runId, body.cmdId) !== 'cool:rp1') return;
    killAt = Date.now();
    inFlightCmdId = body.cmdId;
    answeredBeforeKill = new Set(log.acks(rigCode).map((x) => x.cmdId));
    process.kill(a.pid!, 'SIGKILL'); // at once, in this turn: the rig's ack cannot reach A
  });
  await new Promise<void>((resolve, reject) => {
    observer.once('connect', () => observer.subscribe(topics.commands(rigCode), { qos: 1 }, (err) => (err ? reject(err) : resolve())));
    observer.once('error', reject);
  });

  // B's own view, polled from the kill on.
  let leadAt = 0;
  const watch = (async () => {
    while (!leadAt) {
      if (killAt && (await health(client))?.role === 'leader') leadAt = Date.now();
      await sleep(killAt ? 50 : 100);
    }
  })();

  const stack: FaultStack = {
    env: envB,
    ports: { ...ports, api: apiB },
    broker,
    api: b,
    client,
    brokerUrl,
    startupS: 0,
    restartBroker: () => Promise.reject(new Error('not part of this scenario')),
    restartApi: () => Promise.reject(new Error('not part of this scenario')),
  };
  let drive;
  try {
    drive = await driveRun(ds, stack, fx, sim, null, opts.budgetMs ?? 90_000);
  } finally {
    observer.end(true);
    tiles.stop();
  }
  const waitLead = Date.now() + 15_000;
  while (!leadAt && Date.now() < waitLead) await sleep(50);
  leadAt ||= Number.NaN;
  void watch;
  const f = await reconcile(ds, 'API leader SIGKILL at an in-flight command; standby takes over', fx, sim, log, drive, started);

  const [firstAfter] = await ds.query(
    `SELECT min(stored_at) AS at FROM telemetry_batches WHERE rig_id = $1 AND ts > $2 AND stored_at > $2`,
    [fx.rigId, new Date(killAt)],
  );
  const applied = log.applied(rigCode).filter((x) => x.ok);
  const kinds = applied.map((x) => commandKind(fx.runId, x.cmdId));
  const deliveriesAfter = log.deliveries(rigCode).filter((d) => d.at > killAt);
  const [row] = await ds.query(`SELECT state, publishes FROM rig_commands WHERE rig_code = $1 AND cmd_id = $2`, [rigCode, inFlightCmdId]);
  const [leaderRow] = await ds.query(`SELECT holder FROM cluster_leader WHERE id = 1`);
  const [stress] = await ds.query(
    `SELECT min(at) AS at FROM audit_log WHERE entity = 'run' AND entity_id = $1 AND action = 'run.ambient-reached'`,
    [fx.runId],
  );
  const stressAt = stress?.at ? new Date(stress.at).getTime() : Number.POSITIVE_INFINITY;
  const secs = (t: number) => Math.round((t - killAt) / 100) / 10;
  const figures: FailoverFigures = {
    ...f,
    leadSeconds: secs(leadAt),
    recoverySeconds: firstAfter?.at ? secs(new Date(firstAfter.at).getTime()) : Number.NaN,
    // The run wants expectedCommandKinds() (heat and bias once per stressing phase): anything beyond is a duplicate.
    duplicateCommands: f.cmdIdsAppliedTwice + Math.max(0, kinds.length - expectedCommandKinds().length),
    standbyFloorTiles: tiles.at.filter((t) => t > stressAt && t < killAt).length,
    republishedAnswered: deliveriesAfter.filter((d) => answeredBeforeKill.has(d.cmdId)).length,
    inFlight: {
      cmdId: inFlightCmdId,
      appliedAtRig: applied.filter((x) => x.cmdId === inFlightCmdId).length,
      deliveredAtRig: log.deliveries(rigCode).filter((d) => d.cmdId === inFlightCmdId).length,
      state: row?.state ?? null,
      publishes: row ? Number(row.publishes) : null,
    },
    health: { survivor: await health(client), leaderRowHolder: leaderRow?.holder ?? null },
  };
  return { figures, fx, sim, stop };
}

/** Read the floor's event stream as a browser would; the times of `tile` events naming `rigId`. */
function watchFloorTiles(baseUrl: string, cookie: string, rigId: string): { at: number[]; stop(): void } {
  const at: number[] = [];
  const ac = new AbortController();
  void (async () => {
    const res = await fetch(`${baseUrl}/api/floor/stream`, { headers: { accept: 'text/event-stream', cookie }, signal: ac.signal });
    if (!res.body) return;
    const reader = res.body.getReader();
    const decoder = new TextDecoder();
    let buf = '';
    for (;;) {
      const { value, done } = await reader.read();
      if (done) return;
      buf += decoder.decode(value, { stream: true });
      for (let i = buf.indexOf('\n\n'); i >= 0; i = buf.indexOf('\n\n')) {
        const ev = buf.slice(0, i);
        buf = buf.slice(i + 2);
        if (/^event: tile$/m.test(ev) && ev.includes(rigId)) at.push(Date.now());
      }
    }
  })().catch(() => undefined);
  return { at, stop: () => ac.abort() };
}
