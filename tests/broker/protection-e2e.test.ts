/**
 * Live protection through the real pieces: the Emberlot broker, the server's telemetry feature
 * (ingest → TELEMETRY_LANDED, RigLink over MQTT), and a simulated rig with the `poorHeatSink` fault
 * on one socket (rig-simulator physics: θca 24 °C/W from the start, so that socket runs away).
 * The trip must reach the rig over MQTT and open the socket before its junction passes Tj max,
 * the healthy sockets must keep running, and the alarm e-mail must reach the fake SMTP server.
 */
import bcrypt from 'bcryptjs';
import type { Authenticate } from '../../broker/broker';
import type { RigHandle } from '../../rig-simulator';
import { AlarmEntity, RunSocketEntity, UserEntity } from '../../server/db/entities';
import { startMailSink, type MailSink } from '../../server/mail-sink/mail-sink';
import { startProtectionFeature, type ProtectionFeature } from '../../server/modules/protection/start';
import { createTestDb } from '../support/db';
import { STACK_SERVER as SERVER, startBrokerStack, type BrokerStack } from '../support/broker-stack';
import { waitFor } from './mqtt-test-helpers';
import { createRunFixture, type RunFixture } from './protection-fixtures';

jest.setTimeout(30_000);

const RIG = { id: '', code: 'OV-41', username: 'rig-OV-41', password: 'ov41-protection-secret' };
const authenticate: Authenticate = async (u, p) => {
  if (u === SERVER.username && p === SERVER.password) return { kind: 'server' };
  if (u === RIG.username && p === RIG.password) return { kind: 'rig', rigCode: RIG.code };
  return null;
};

let stack: BrokerStack;
let db: BrokerStack['db'];
let sink: MailSink;
let feature: ProtectionFeature;
let rig: RigHandle;
let fx: RunFixture;
let watch: ReturnType<typeof setInterval>;
/** Highest true junction temperature the simulator reached on each socket. */
const peakTj = [0, 0, 0, 0];

beforeAll(async () => {
  const testDb = await createTestDb();
  sink = await startMailSink({ port: 0 });
  // The simulator's demo part: Tj max 150 °C, θjc 1.5 °C/W (HPD-T220N); the run's device type says the same.
  fx = await createRunFixture(testDb.ds, {
    rigCode: RIG.code,
    sockets: 4,
    chamberC: 60,
    bias: { vceV: 20, ibA: 0.005 },
    tjMaxC: 150,
    thetaJcCPerW: 1.5,
  });
  await testDb.ds.getRepository(UserEntity).insert({
    email: 'night.shift@harrowgate-lab.example',
    name: 'Night shift',
    role: 'operator',
    passwordHash: await bcrypt.hash('not-used-here', 4),
  });
  stack = await startBrokerStack(testDb, {
    clientId: 'emberlot-server-protection-e2e',
    authenticate,
    config: { smtp: { host: '127.0.0.1', port: sink.port, from: 'Emberlot <emberlot@harrowgate-lab.example>' } },
  });
  db = stack.db;
  feature = await startProtectionFeature(stack.ctx, { mail: { attempts: 2, backoffMs: 10 } });
  stack.onStop(() => feature.stop());
});

afterAll(async () => {
  clearInterval(watch);
  await stack?.stop();
  await sink?.close();
});

test('a poorly heat-sunk socket is tripped over MQTT before Tj max; its neighbours keep running', async () => {
  // 14.4 stress seconds per wall second, a sample every 0.1 s (1.44 stress s). The case lag of 600
  // stress s (a heavy socket block) keeps the runaway slow enough in wall time that the accelerated
  // clock does not turn ordinary pipeline latency (ingest window, commit, MQTT round trip) into
  // tens of stress seconds; a real rig runs its clock 1:1.
  rig = await stack.startRig(RIG, {
    sockets: 4,
    mode: 'powered',
    lots: ['HPD-L2403'],
    chamberC: 60,
    setpointC: 60,
    biasOn: true,
    vV: 20,
    iA: 0.005,
    stressHoursPerWallSecond: 0.004,
    caseTauStressS: 600,
    samplePeriodWallS: 0.1,
    reconnectWallS: 0.1,
    seed: 41,
    faults: { poorHeatSink: { sockets: [2], thetaCaCPerW: 24, rampCPerWPerH: 0 } },
  });
  watch = setInterval(() => {
    rig.state().sockets.forEach((s, i) => (peakTj[i] = Math.max(peakTj[i], s.tjC)));
  }, 5);

  await waitFor(() => rig.state().sockets[2].tripped, 25_000, 'socket 2 tripped by the server');
  // A few more samples: the rig reports the latch, the others carry on.
  const seqAtTrip = rig.lastSeq();
  await waitFor(() => rig.lastSeq() >= seqAtTrip + 10, 5000, 'more samples');
  await feature.idle();

  const s = rig.state().sockets;
  expect(s[2].destroyed).toBeNull();
  expect(peakTj[2]).toBeLessThan(s[2].device.tjMaxC);
  expect(s[2].tripReason).toMatch(/^Emberlot protection: Tj/);
  expect([0, 1, 3].map((i) => s[i].tripped)).toEqual([false, false, false]);
  expect([0, 1, 3].map((i) => s[i].biasOn)).toEqual([true, true, true]);
  expect(Math.max(peakTj[0], peakTj[1], peakTj[3])).toBeLessThan(120);

  const sockets = await db.ds.getRepository(RunSocketEntity).find({ where: { runId: fx.run.id }, order: { socketIndex: 'ASC' } });
  expect(sockets.map((r) => r.tripped)).toEqual([false, false, true, false]);
  const alarms = await db.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id, kind: 'runaway-trip' } });
  expect(alarms).toHaveLength(1);
  expect(alarms[0].details).toEqual(expect.objectContaining({ command: 'confirmed', cmdId: `trip:${RIG.code}:2:${fx.run.id}` }));
  const mail = await sink.waitFor(
    (m) => m.to.includes('night.shift@harrowgate-lab.example') && /Socket tripped: runaway/.test(m.subject),
    5000,
  );
  expect(mail.text).toMatch(/Leave the socket de-energised/);
  console.log(
    `End to end: socket 2 peak Tj ${peakTj[2].toFixed(1)} °C (Tj max ${s[2].device.tjMaxC} °C), margin ${(s[2].device.tjMaxC - peakTj[2]).toFixed(1)} °C; ${feature.monitor.tripLog[0]?.assessment.reason}`,
  );
});
