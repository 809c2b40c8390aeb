/**
 * The socket thermal model through the real pieces: the Emberlot broker, the server's telemetry
 * feature (ingest → TELEMETRY_LANDED), the thermal tracker and live protection (started together,
 * protection/start.ts), real PostgreSQL, and a simulated rig whose socket 1 has the `dryingPad`
 * fault (rig-simulator: θca 2 °C/W rising 2 °C/W per stress hour). The degrading socket must be
 * flagged ('thermal-path' alarm) before protection trips anything; the healthy sockets' identified
 * θ and τ must be within 10 % of the simulator's true values (θca 2 °C/W, τ 120 stress s).
 */
import { createEmberlotBroker, type Authenticate, type EmberlotBroker } from '../../broker/broker';
import { startRig, type RigHandle } from '../../rig-simulator';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import { AlarmEntity } from '../../server/db/entities';
import { startProtectionFeature, type ProtectionFeature } from '../../server/modules/protection/start';
import { startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { createTestDb, type TestDb } from '../support/db';
import { waitFor } from './mqtt-test-helpers';
import { createRunFixture, type RunFixture } from './protection-fixtures';

jest.setTimeout(60_000);

const SERVER = { username: 'emberlot-server', password: 'server-secret' };
const RIG = { code: 'OV-47', username: 'rig-OV-47', password: 'ov47-thermal-secret' };
const authenticate: Authenticate = async (u, p) => {
  if (u === SERVER.username && p === SERVER.password) return { kind: 'server' };
  if (u === RIG.username && p === RIG.password) return { kind: 'rig', rigCode: RIG.code };
  return null;
};
/** The simulator's truth for the sound sockets (rig-simulator/physics.ts DEFAULTS, caseTauStressS below). */
const TRUE_THETA = 2;
const TRUE_TAU_S = 120;

let db: TestDb;
let eb: EmberlotBroker;
let ctx: AppContext;
let feature: ProtectionFeature;
let stopTelemetry: (() => Promise<void>) | null = null;
let rig: RigHandle;
let fx: RunFixture;

beforeAll(async () => {
  db = await createTestDb();
  fx = await createRunFixture(db.ds, {
    rigCode: RIG.code,
    sockets: 4,
    chamberC: 60,
    bias: { vceV: 20, ibA: 0.005 },
    tjMaxC: 150,
    thetaJcCPerW: 1.5,
  });
  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  eb = await createEmberlotBroker({ port: 0, authenticate });
  stopTelemetry = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, ...SERVER },
    clientId: 'emberlot-server-thermal-path',
    sweepEveryMs: 60_000,
  });
  feature = await startProtectionFeature(ctx);
  await waitFor(() => ctx.services.rigLink!.connected(), 5000, 'server link');
});

afterAll(async () => {
  await rig?.stop();
  await feature?.stop();
  await stopTelemetry?.();
  await eb?.close();
  await db?.drop();
});

test('a drying pad is flagged before any trip; healthy sockets’ θ and τ within 10 % of the simulator’s', async () => {
  // 30 stress seconds per sample (τ/4), a sample every 0.1 wall s: one stress hour is 12 wall seconds.
  rig = startRig({
    rigCode: RIG.code,
    brokerUrl: `mqtt://127.0.0.1:${eb.port}`,
    username: RIG.username,
    password: RIG.password,
    sockets: 4,
    mode: 'powered',
    lots: ['HPD-L2403'],
    chamberC: 60,
    setpointC: 60,
    biasOn: true,
    vV: 20,
    iA: 0.005,
    caseTauStressS: TRUE_TAU_S,
    thetaCaCPerW: TRUE_THETA,
    stressHoursPerWallSecond: 30 / 0.1 / 3600,
    samplePeriodWallS: 0.1,
    reconnectWallS: 0.1,
    seed: 47,
    faults: { noise: { tempC: 0.2, currentPct: 0.5 }, dryingPad: { sockets: [1], startCPerW: 2, rampCPerWPerH: 2, maxCPerW: 40 } },
  });
  const alarms = db.ds.getRepository(AlarmEntity);
  await waitFor(() => feature.thermal.stats.flags > 0, 40_000, 'thermal-path flag');
  const atFlag = rig.state().sockets[1];
  await feature.idle();

  // Flagged before protection had anything to do: no trip, no runaway warning, the junction far below the margin zone.
  expect(await alarms.count({ where: { rigId: fx.rig.id, kind: 'runaway-trip' } })).toBe(0);
  expect(rig.state().sockets.map((s) => s.tripped)).toEqual([false, false, false, false]);
  expect(atFlag.tjC).toBeLessThan(atFlag.device.tjMaxC - 10);
  const flags = await alarms.find({ where: { rigId: fx.rig.id, kind: 'thermal-path' } });
  expect(flags.map((a) => a.socketIndex)).toEqual([1]);
  expect(flags[0].severity).toBe('warning');
  expect(flags[0].details.action).toMatch(/no substitute for the rig’s hardware interlocks/);
  expect(Number(flags[0].details.riseFraction)).toBeGreaterThan(0.25);
  // The flag's θ is the simulator's θca then, within 10 % (the window's centre lags the ramp a little).
  expect(Math.abs(Number(flags[0].details.thetaCPerW) / atFlag.thetaCaCPerW - 1)).toBeLessThan(0.1);

  for (const i of [0, 2, 3]) {
    const t = await ctx.services.thermal.socket(RIG.code, i);
    expect(t.runId).toBe(fx.run.id);
    expect(t.flagged).toBe(false);
    const withTau = t.history.find((f) => f.good && f.tauS !== null);
    expect(withTau).toBeDefined();
    expect(Math.abs(withTau!.thetaCPerW! / TRUE_THETA - 1)).toBeLessThan(0.1);
    expect(Math.abs(withTau!.tauS! / TRUE_TAU_S - 1)).toBeLessThan(0.1);
    expect(Math.abs(t.latestGood!.thetaCPerW! / TRUE_THETA - 1)).toBeLessThan(0.1);
  }
  const pad = await ctx.services.thermal.socket(RIG.code, 1);
  expect(pad.flagged).toBe(true);
  expect(pad.latestGood!.thetaCPerW!).toBeGreaterThan(pad.baselineThetaCPerW! * 1.25);
  // Protection now uses the pad's identified θca (larger than its own window fit would be on a steady socket).
  expect(ctx.services.thermalTracker!.identifiedThetaCa(fx.rig.id, 1)).toBeCloseTo(pad.latestGood!.thetaCPerW!, 6);
  console.log(
    `thermal-path: flagged at true θca ${atFlag.thetaCaCPerW.toFixed(2)} °C/W, Tj ${atFlag.tjC.toFixed(1)} °C (Tj max ${atFlag.device.tjMaxC} °C)`,
  );
});
