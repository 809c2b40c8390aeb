/**
 * The socket thermal model's API: the tracker fed TELEMETRY_LANDED built from the simulator's
 * physics (rig-simulator/physics.ts, true θca 2 °C/W, τ 120 s; socket 1 a drying pad), what
 * GET /api/thermal/rigs/:code/sockets/:socket answers, its validation, and the operator
 * acknowledging the 'thermal-path' alarm through the alarms module.
 */
import request from 'supertest';
import { socketFlags } from '../../shared/mqtt';
import { mulberry32 } from '../../shared/random';
import type { FloorTile } from '../../shared/schemas/floor';
import type { SocketThermal } from '../../shared/schemas/thermal';
import { DEMO_LOTS, createRigState, makeLotDevices, stepRig, type RigState } from '../../rig-simulator';
import { AlarmEntity } from '../../server/db/entities';
import { RUN_EVENT, TELEMETRY_LANDED, type TelemetryLanded } from '../../server/events';
import { ThermalTracker } from '../../server/modules/thermal/thermal.tracker';
import { createRunFixture, type RunFixture } from '../broker/protection-fixtures';
import { createTestApp, type TestApp } from '../support/api';

const RIG = 'OV-57';
let t: TestApp;
let fx: RunFixture;
let tracker: ThermalTracker;

const gaussian = (r: () => number) => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());

/** The simulator's rig stepped 30 stress s per message, read like a rig reports it (0.2 K noise). */
function messages(n: number): TelemetryLanded[] {
  const devices = makeLotDevices(DEMO_LOTS[0], 2, 5);
  let st: RigState = createRigState({
    rigCode: RIG,
    chamberC: 60,
    setpointC: 60,
    sockets: devices.map((device, i) => ({
      device,
      biasOn: true,
      vV: 20,
      ibA: 0.005,
      caseTauS: 120,
      thetaCaCPerW: 2,
      thetaCaRampCPerWPerH: i === 1 ? 3 : 0,
      thetaCaMaxCPerW: i === 1 ? 30 : 2,
    })),
  });
  const rand = mulberry32(57);
  const out: TelemetryLanded[] = [];
  const t0 = Date.now() - n * 1000;
  for (let k = 0; k < n; k++) {
    st = stepRig(st, 30);
    out.push({
      rigId: fx.rig.id,
      rigCode: RIG,
      seq: k + 1,
      ts: new Date(t0 + k * 1000),
      stressClockS: st.stressClockS,
      chamberC: st.chamberC,
      humidityPct: null,
      setpointC: st.setpointC,
      socket: st.sockets.map((s) => s.i),
      caseC: st.sockets.map((s) => s.caseC + 0.2 * gaussian(rand)),
      vV: st.sockets.map((s) => s.vOutV),
      iA: st.sockets.map((s) => s.iA),
      flags: st.sockets.map((s) => socketFlags(s.biasOn, s.tripped)),
    });
  }
  return out;
}

beforeAll(async () => {
  t = await createTestApp();
  fx = await createRunFixture(t.db.ds, {
    rigCode: RIG,
    sockets: 2,
    chamberC: 60,
    bias: { vceV: 20, ibA: 0.005 },
    tjMaxC: 150,
    thetaJcCPerW: 1.5,
  });
  tracker = new ThermalTracker(t.ctx);
  tracker.start();
  for (const m of messages(160)) t.ctx.events.emit(TELEMETRY_LANDED, m);
  await tracker.idle();
});

afterAll(async () => {
  await tracker?.stop();
  await t?.close();
});

describe('GET /api/thermal/rigs/:code/sockets/:socket', () => {
  it('a healthy socket: θ and τ within 10 % of the simulator’s, with fit quality and history; not flagged', async () => {
    const res = await (await t.signIn('operator')).get(`/api/thermal/rigs/${RIG.toLowerCase()}/sockets/0`);
    expect(res.status).toBe(200);
    const body: SocketThermal = res.body;
    expect(body).toEqual(
      expect.objectContaining({ rigCode: RIG, socketIndex: 0, runId: fx.run.id, flagged: false, riseLimitFraction: 0.25 }),
    );
    const withTau = body.history.find((f) => f.good && f.tauS !== null)!;
    expect(withTau.method).toBe('arx');
    expect(Math.abs(withTau.thetaCPerW! / 2 - 1)).toBeLessThan(0.1);
    expect(Math.abs(withTau.tauS! / 120 - 1)).toBeLessThan(0.1);
    expect(withTau.r2!).toBeGreaterThan(0.9);
    expect(withTau.rmsC!).toBeLessThan(0.5);
    expect(withTau.offsetBasis).toBe('chamber');
    expect(Math.abs(body.latestGood!.thetaCPerW! / 2 - 1)).toBeLessThan(0.1);
    expect(Math.abs(body.baselineThetaCPerW! / 2 - 1)).toBeLessThan(0.1);
  });

  it('the drying pad: flagged, θ past its baseline by more than the limit; the operator acknowledges the alarm', async () => {
    const op = await t.signIn('operator');
    const body: SocketThermal = (await op.get(`/api/thermal/rigs/${RIG}/sockets/1`)).body;
    expect(body.flagged).toBe(true);
    expect(body.latestGood!.thetaCPerW! / body.baselineThetaCPerW!).toBeGreaterThan(1.25);
    expect(body.latestGood!.riseFraction!).toBeGreaterThan(0.25);
    const alarms = await t.db.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id, kind: 'thermal-path' } });
    expect(alarms.map((a) => a.socketIndex)).toEqual([1]);
    const ack = await op.post(`/api/alarms/${alarms[0].id}/acknowledge`).send({ note: 'Pad on socket 1 reseated at the 168 h hold.' });
    expect(ack.status).toBe(200);
    expect(ack.body).toEqual(
      expect.objectContaining({ kind: 'thermal-path', open: false, ackNote: 'Pad on socket 1 reseated at the 168 h hold.' }),
    );
    // Acknowledged but the condition holds: still live, so still shown as flagged, and on the floor tile.
    expect((await op.get(`/api/thermal/rigs/${RIG}/sockets/1`)).body.flagged).toBe(true);
    const tiles: FloorTile[] = (await op.get('/api/floor')).body.items;
    expect(tiles.find((x) => x.code === RIG)?.thermalFlags).toEqual([1]);
  });

  it('the run ending clears the flag’s condition (acknowledged and cleared: no longer flagged)', async () => {
    t.ctx.events.emit(RUN_EVENT, {
      type: 'state-changed',
      runId: fx.run.id,
      runCode: fx.run.code,
      rigId: fx.rig.id,
      rigCode: RIG,
      at: new Date().toISOString(),
      from: 'stressing',
      to: 'aborted',
      actor: 'engineer@test.example',
      reason: 'test',
    });
    await tracker.idle();
    const [alarm] = await t.db.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id, kind: 'thermal-path' } });
    expect(alarm.clearedAt).not.toBeNull();
    expect(alarm.details.cleared).toEqual({ runState: 'aborted' });
    expect((await (await t.signIn('operator')).get(`/api/thermal/rigs/${RIG}/sockets/1`)).body.flagged).toBe(false);
  });

  it('a socket with no identifications answers empty, honestly', async () => {
    const body: SocketThermal = (await (await t.signIn('operator')).get(`/api/thermal/rigs/${RIG}/sockets/7`)).body;
    expect(body).toEqual(
      expect.objectContaining({ latest: null, latestGood: null, baselineThetaCPerW: null, history: [], flagged: false }),
    );
  });

  it('validates: a socket that is not a whole number or out of range is 400 naming the field; an unknown rig 404; signed out 401', async () => {
    const op = await t.signIn('operator');
    const bad = await op.get(`/api/thermal/rigs/${RIG}/sockets/two`);
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.error)).toMatch(/socket/);
    expect((await op.get(`/api/thermal/rigs/${RIG}/sockets/999`)).status).toBe(400);
    expect((await op.get(`/api/thermal/rigs/${RIG}/sockets/1.5`)).status).toBe(400);
    const missing = await op.get('/api/thermal/rigs/OV-99/sockets/0');
    expect(missing.status).toBe(404);
    expect(missing.body.error.message).toMatch(/Rig OV-99 was not found/);
    expect((await request(t.app).get(`/api/thermal/rigs/${RIG}/sockets/0`)).status).toBe(401);
  });
});
