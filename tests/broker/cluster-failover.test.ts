/**
 * A broker node lost in the cluster layout: real Redis (Debian's redis-server, private instance),
 * two real broker processes sharing state through it, the API process and a simulated rig both
 * given the two brokers' addresses, real PostgreSQL. Broker A — the one both are connected to — is
 * killed with SIGKILL mid-run and NOT restarted. The rig and the API's link move to broker B and the
 * rig re-sends what was not confirmed. Afterwards (tests/faults/scenario.ts reconcile): every
 * numbered sample stored exactly once (lost 0), hours exact, every command applied once; and the
 * rig's last will left in Redis by the dead broker did not mark the (reconnected) rig offline.
 */
import mqtt, { type MqttClient } from 'mqtt';
import { parseStatus, topics, type RigStatus } from '../../shared/mqtt';
import { createTestDb, type TestDb } from '../support/db';
import { MQTT_SERVER, stopAllProcesses } from '../support/processes';
import { installRigCommandLog, type RigCommandLog } from '../faults/rig-command-log';
import { startClusterStack, type ClusterStack } from '../faults/cluster';
import {
  OPERATOR,
  createFaultRun,
  driveRun,
  expectBooksBalance,
  ingestCounters,
  printFigures,
  reconcile,
  seedBase,
  startSimRig,
  waitUntil,
  type SimRig,
} from '../faults/scenario';
import type { DeviceTypeEntity } from '../../server/db/entities';

jest.setTimeout(90_000);

/**
 * The brokers' heartbeat here: production's 2 s (B counts A dead after 3 beats, 6 s, and sweeps A's
 * wills every 4). The will can only be dropped as stale if the rig is back (on B) before B's first
 * sweep after that; with the fault stacks' 0.5 s beat that sweep came 1.5–3.5 s after the kill, and
 * on a loaded machine the rig took 2.9 s to reconnect: B then rightly published the will of a rig
 * that was offline at the time.
 */
const HEARTBEAT_MS = 2_000;

let db: TestDb;
let stack: ClusterStack;
let log: RigCommandLog;
let type: DeviceTypeEntity;
const sims: SimRig[] = [];
/** Every status of OV-91 seen live (not replayed as retained) by a watcher on broker B. */
const liveStatuses: RigStatus[] = [];
let watcher: MqttClient | null = null;

function connectWatcher(port: number, id: string): Promise<MqttClient> {
  return mqtt.connectAsync(`mqtt://127.0.0.1:${port}`, {
    ...MQTT_SERVER,
    clientId: id,
    protocolVersion: 4,
    clean: true,
    reconnectPeriod: 0,
  });
}

beforeAll(async () => {
  log = installRigCommandLog();
  db = await createTestDb();
  type = await seedBase(db.ds);
  stack = await startClusterStack(db.config, {
    redisPortEnv: 'EMBERLOT_TEST_REDIS_PORT',
    name: 'test',
    extraEnv: { EMBERLOT_BROKER_HEARTBEAT_MS: String(HEARTBEAT_MS) },
  });
  await stack.client.signIn(OPERATOR.email, OPERATOR.password);
  watcher = await connectWatcher(stack.brokerPorts[1], 'emberlot-watch-status');
  watcher.on('message', (_topic, payload, packet) => {
    const st = parseStatus(payload);
    if (st.ok && !packet.retain) liveStatuses.push(st.data);
  });
  await watcher.subscribeAsync(topics.status('OV-91'), { qos: 1 });
}, 90_000);

afterAll(async () => {
  await watcher?.endAsync(true);
  for (const s of sims) await s.rig.stop();
  await stopAllProcesses(3000);
  await stack?.stopRedis();
  log?.uninstall();
  await db?.drop();
});

test('broker A SIGKILLed mid-run (not restarted): rig and API move to broker B, every sample stored once, every command applied once', async () => {
  const started = { at: Date.now(), counters: await ingestCounters(db.ds) };
  const fx = await createFaultRun(db.ds, type, 'OV-91');
  const sim = startSimRig(stack.brokerUrl, fx, { persistentSession: true });
  sims.push(sim);
  let seqAtKill = 0;
  let killedAt = 0;
  const drive = await driveRun(
    db.ds,
    stack,
    fx,
    sim,
    {
      phase: 1,
      atH: 1.5,
      inject: async () => {
        // Both the rig and the API's link were given A first: they are on A now.
        expect(sim.rig.connected).toBe(true);
        seqAtKill = sim.rig.lastSeq();
        killedAt = Date.now();
        const exit = await stack.killBroker(0, 'SIGKILL');
        expect(exit.signal).toBe('SIGKILL');
        await waitUntil(() => sim.rig.connected, 10_000, 'rig reconnected to broker B');
      },
    },
    80_000,
  );
  const f = await reconcile(db.ds, 'cluster: broker A SIGKILL, B carries on', fx, sim, log, drive, started);
  printFigures({ ...f, startupS: stack.startupS, reconnectS: drive.outageS, seqAtKill, killedAt } as typeof f);
  expect(seqAtKill).toBeGreaterThan(0);
  expect(f.published).toBeGreaterThan(seqAtKill); // the stream went on after the kill
  expect(sim.rig.stats.disconnects).toBeGreaterThanOrEqual(1);
  expect(stack.api.lines(/\[mqtt\] lost the broker/).length).toBe(1);
  expect(stack.api.lines(/\[mqtt\] reconnected to/).length).toBe(1);
  expect(stack.brokers[1].running).toBe(true);
  expectBooksBalance(f, fx, log, sim.rig);
});

test("the dead broker's stored last will of the rig is dropped as stale: no offline status for the reconnected rig", async () => {
  // After 3 missed heartbeats broker B treats A as dead and goes through A's wills every 4 beats
  // (≤ 7 beats after the kill on an idle machine; a loaded one runs B's timers late): wait for B to have dealt
  // with the rig's will — dropped (deleted from Redis, so never published later) or, wrongly,
  // published. Published, the stale will would have said offline (and stayed retained).
  await waitUntil(
    () => stack.brokers[1].lines(/dropped the stale last will of "rig-OV-91"/).length > 0 || liveStatuses.some((st) => !st.online),
    16 * HEARTBEAT_MS + 30_000,
    "broker B's sweep of the dead broker's wills",
  );
  expect(liveStatuses.filter((st) => !st.online)).toEqual([]);
  expect(liveStatuses.filter((st) => st.online).length).toBeGreaterThanOrEqual(2); // first connect + reconnect
  expect(stack.brokers[1].lines(/dropped the stale last will of "rig-OV-91"/)).toHaveLength(1);
  // A newcomer gets the retained status: online.
  const late = await connectWatcher(stack.brokerPorts[1], 'emberlot-watch-late');
  const retained = new Promise<RigStatus>((resolve) =>
    late.on('message', (_t, payload) => {
      const st = parseStatus(payload);
      if (st.ok) resolve(st.data);
    }),
  );
  await late.subscribeAsync(topics.status('OV-91'), { qos: 1 });
  expect((await retained).online).toBe(true);
  await late.endAsync(true);
  const [row]: Array<{ online: boolean }> = await db.ds.query('SELECT online FROM rigs WHERE code = $1', ['OV-91']);
  expect(row.online).toBe(true);
});
