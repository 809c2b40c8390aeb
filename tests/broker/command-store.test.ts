/**
 * The durable command log (server/modules/telemetry/command-store.ts): real PostgreSQL, the real
 * broker in-process, the server's telemetry feature (DurableRigLink over MQTT) and the rig simulator.
 *  - a command is stored before it goes out and its answer is stored with it;
 *  - the same cmdId asked again (a new leader wanting what its predecessor sent) gets the stored
 *    answer and is not published again;
 *  - a standby's command (QueuedRigLink) is published by the leader and answered through the log;
 *  - a standby's command no leader took in time expires and is never published afterwards.
 */
import bcrypt from 'bcryptjs';
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { startRig, type RigHandle } from '../../rig-simulator';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import { RigEntity } from '../../server/db/entities';
import { QueuedRigLink } from '../../server/modules/telemetry/command-store';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { createTestDb, type TestDb } from '../support/db';
import { installRigCommandLog, type RigCommandLog } from '../faults/rig-command-log';
import { waitFor } from './mqtt-test-helpers';

jest.setTimeout(30_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const SECRET = 'ov-31-command-log-secret';
const RIG = 'OV-31';

let db: TestDb;
let eb: EmberlotBroker;
let ctx: AppContext;
let log: RigCommandLog;
let stopTelemetry: (() => Promise<void>) | null = null;
let rig: RigHandle;

const startLeader = async () => {
  stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, ...SERVER },
    clientId: 'emberlot-command-log-test',
    persistentSession: true, // as an elected leader: it also publishes what standbys queue
    sweepEveryMs: 60_000,
    upkeep: { cronExpression: null },
  });
  await waitFor(() => !!ctx.services.rigLink?.connected(), 5000, 'server link');
};

const row = async (cmdId: string) => {
  const [r] = await db.ds.query(`SELECT state, publishes, type, error FROM rig_commands WHERE rig_code = $1 AND cmd_id = $2`, [RIG, cmdId]);
  return r ? { state: r.state as string, publishes: Number(r.publishes), type: r.type as string, error: r.error as string | null } : null;
};
const deliveries = (cmdId: string) => log.deliveries(RIG).filter((d) => d.cmdId === cmdId).length;

beforeAll(async () => {
  log = installRigCommandLog();
  db = await createTestDb();
  const m = db.ds.manager;
  await m.save(
    m.create(RigEntity, {
      code: RIG,
      name: 'Oven 31',
      socketCount: 4,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: 'rig-ov-31',
      mqttSecretHash: await bcrypt.hash(SECRET, 4),
      credentialsIssuedAt: new Date(),
    }),
  );
  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  eb = await createEmberlotBroker({
    port: 0,
    authenticate: createPgAuthenticate({ pool: pgPoolOf(ctx), server: SERVER, verifiedCacheSize: 10 }),
  });
  rig = startRig({
    rigCode: RIG,
    brokerUrl: `mqtt://127.0.0.1:${eb.port}`,
    username: 'rig-ov-31',
    password: SECRET,
    sockets: 4,
    mode: 'reverse',
    chamberC: 25,
    setpointC: 25,
    biasOn: false,
    vV: 0,
    stressHoursPerWallSecond: 1,
    samplePeriodWallS: 0.5,
    reconnectWallS: 0.1,
    resendAfterWallS: 1,
  });
  await waitFor(() => rig.connected, 5000, 'simulated rig');
});

afterAll(async () => {
  await rig?.stop();
  await stopTelemetry?.();
  await eb?.close();
  log?.uninstall();
  await db?.drop();
});

test('a standby command no leader takes in time expires and is never published later', async () => {
  const standby = new QueuedRigLink(() => pgPoolOf(ctx), 50);
  const cmdId = 'test:expire:1';
  await expect(standby.send(RIG, { type: 'setpoint', setpointC: 60 }, { cmdId, timeoutMs: 400 })).rejects.toMatchObject({
    reason: 'timeout',
  });
  expect(await row(cmdId)).toMatchObject({ state: 'expired', publishes: 0 });
  await startLeader(); // the leader arrives afterwards: it must not send what the caller gave up on
  await new Promise((r) => setTimeout(r, 800)); // four of the leader's queue polls (QUEUE_POLL_MS 200)
  expect(deliveries(cmdId)).toBe(0);
  expect(rig.state().setpointC).toBe(25);
  // Asked again under the same cmdId (even by the leader): the stored outcome, still not published.
  await expect(ctx.services.rigLink!.send(RIG, { type: 'setpoint', setpointC: 60 }, { cmdId })).rejects.toMatchObject({
    reason: 'refused',
  });
  expect(deliveries(cmdId)).toBe(0);
});

test('stored before publishing, answered once: the same cmdId again gets the stored answer and is not published again', async () => {
  const link = ctx.services.rigLink!;
  const cmdId = 'test:setpoint:40';
  const applied0 = rig.stats.commandsApplied;
  await expect(link.send(RIG, { type: 'setpoint', setpointC: 40 }, { cmdId })).resolves.toMatchObject({ cmdId, ok: true });
  expect(await row(cmdId)).toEqual({ state: 'acked', publishes: 1, type: 'setpoint', error: null });
  expect(deliveries(cmdId)).toBe(1);
  // A new leader (same process here: the log is what it reads) wants the same command.
  await expect(link.send(RIG, { type: 'setpoint', setpointC: 40 }, { cmdId })).resolves.toMatchObject({ cmdId, ok: true });
  expect(deliveries(cmdId)).toBe(1);
  expect(rig.stats.commandsApplied).toBe(applied0 + 1);
  expect(rig.state().setpointC).toBe(40);
});

test('a standby command goes out through the leader and its answer comes back through the log', async () => {
  const standby = new QueuedRigLink(() => pgPoolOf(ctx), 50);
  const cmdId = 'test:standby:bias-off';
  await expect(standby.send(RIG, { type: 'bias', sockets: [0, 1], on: false }, { cmdId, timeoutMs: 5000 })).resolves.toMatchObject({
    cmdId,
    ok: true,
  });
  expect(await row(cmdId)).toMatchObject({ state: 'acked', publishes: 1 });
  expect(deliveries(cmdId)).toBe(1);
  // A refusal travels back the same way (socket 9 does not exist on a 4-socket rig).
  const refusedId = 'test:standby:bad-socket';
  await expect(standby.send(RIG, { type: 'trip', socket: 9, reason: 'test' }, { cmdId: refusedId, timeoutMs: 5000 })).rejects.toMatchObject(
    {
      reason: 'refused',
    },
  );
  expect(await row(refusedId)).toMatchObject({ state: 'refused', publishes: 1 });
});
