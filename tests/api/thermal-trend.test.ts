/**
 * The thermal path's trend rule through the server's tracker (server/modules/thermal) and real
 * PostgreSQL: the simulator's rig (rig-simulator `initialRigState` + `stepRig`, θca 2 °C/W, τ 120 s)
 * with socket 1's `dryingPad` fault at a slow 0.01 °C/W per stress hour (0.5 % of θ per hour), read
 * every 300 stress s with 0.2 K sensor noise. The trend rule (shared/thermal/rules.ts) must flag
 * socket 1 while its θ is still well below the step rule's +25 % line, the step rule only later;
 * the healthy socket 0 must not be flagged. What GET /api/thermal/… shows follows the stored fits.
 */
import { socketFlags } from '../../shared/mqtt';
import { mulberry32 } from '../../shared/random';
import type { SocketThermal } from '../../shared/schemas/thermal';
import { THERMAL_PATH_RISE_FRACTION, TREND_MIN_FITS } from '../../shared/thermal';
import { initialRigState, stepRig, type RigState } from '../../rig-simulator';
import { AlarmEntity } from '../../server/db/entities';
import { TELEMETRY_LANDED, type TelemetryLanded } from '../../server/events';
import { ThermalTracker } from '../../server/modules/thermal/thermal.tracker';
import { createRunFixture, type RunFixture } from '../broker/protection-fixtures';
import { createTestApp, type TestApp } from '../support/api';

jest.setTimeout(120_000);

const RIG = 'OV-58';
const STEP_S = 300;
/** The pad's true rate (°C/W per stress hour) and start. */
const PAD_RATE = 0.01;
let t: TestApp;
let fx: RunFixture;
let tracker: ThermalTracker;

const gaussian = (r: () => number) => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());

interface Seen {
  hours: number;
  rule: string;
  riseFraction: number;
  message: string;
}

/** First time (stress hours) each rule held socket 1's alarm, as read back from the alarms table. */
const first: { trend: Seen | null; step: Seen | null } = { trend: null, step: null };

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
  let st: RigState = initialRigState({
    rigCode: RIG,
    brokerUrl: 'mqtt://unused',
    username: 'unused',
    password: 'unused',
    sockets: 2,
    mode: 'powered',
    lots: ['HPD-L2403'],
    chamberC: 60,
    setpointC: 60,
    biasOn: true,
    vV: 20,
    iA: 0.005,
    caseTauStressS: 120,
    thetaCaCPerW: 2,
    faults: { dryingPad: { sockets: [1], startCPerW: 2, rampCPerWPerH: PAD_RATE, maxCPerW: 40 } },
  });
  const rand = mulberry32(58);
  const alarms = t.db.ds.getRepository(AlarmEntity);
  const n = 760; // 63 stress hours: the step rule's +25 % needs ~50 h after the baseline
  const t0 = Date.now() - n * 100;
  for (let k = 0; k < n; k++) {
    st = stepRig(st, STEP_S);
    const m: TelemetryLanded = {
      rigId: fx.rig.id,
      rigCode: RIG,
      seq: k + 1,
      ts: new Date(t0 + k * 100),
      stressClockS: st.stressClockS,
      chamberC: st.chamberC,
      humidityPct: null,
      setpointC: st.setpointC,
      socket: st.sockets.map((s) => s.i),
      caseC: st.sockets.map((s) => s.caseC + 0.2 * gaussian(rand)),
      vV: st.sockets.map((s) => s.vOutV),
      iA: st.sockets.map((s) => s.iA),
      flags: st.sockets.map((s) => socketFlags(s.biasOn, s.tripped)),
    };
    t.ctx.events.emit(TELEMETRY_LANDED, m);
    if (k % 5 === 4) {
      await tracker.idle();
      const a = await alarms.findOne({ where: { rigId: fx.rig.id, kind: 'thermal-path', socketIndex: 1 } });
      const rule = a ? String(a.details.rule) : null;
      if (a && (rule === 'trend' || rule === 'step') && first[rule] === null) {
        first[rule] = { hours: st.stressClockS / 3600, rule, riseFraction: Number(a.details.riseFraction), message: a.message };
      }
    }
  }
  await tracker.idle();
});

afterAll(async () => {
  await tracker?.stop();
  await t?.close();
});

describe('the trend rule on a slowly drying pad (simulator dryingPad 0.01 °C/W per h)', () => {
  it('flags the pad by the trend rule while θ is still well below the step rule’s line; the step rule fires only later', () => {
    expect(first.trend).not.toBeNull();
    expect(first.step).not.toBeNull();
    console.log(
      `thermal trend: trend rule at ${first.trend!.hours.toFixed(1)} h (rise ${(first.trend!.riseFraction * 100).toFixed(1)} %), ` +
        `step rule at ${first.step!.hours.toFixed(1)} h (rise ${(first.step!.riseFraction * 100).toFixed(1)} %)`,
    );
    expect(first.trend!.hours).toBeLessThan(first.step!.hours);
    expect(first.trend!.riseFraction).toBeLessThan(0.6 * THERMAL_PATH_RISE_FRACTION);
    expect(first.step!.riseFraction).toBeGreaterThan(THERMAL_PATH_RISE_FRACTION);
    // The alarm's words say which rule fired.
    expect(first.trend!.message).toMatch(
      /trend rule: rising [\d.]+ °C\/W per 100 h \(90 % interval [-\d.]+ °C\/W per 100 h to [\d.]+ °C\/W per 100 h\)/,
    );
    expect(first.trend!.message).toMatch(/reaches \+25 % over the [\d.]+ °C\/W found first in run \S+ in about [\d.]+ h/);
    expect(first.step!.message).toMatch(/step rule: \d+ % above the [\d.]+ °C\/W found first/);
  });

  it('the pad’s socket sheet: flagged, the trend with its interval covering the simulator’s rate, stored with the fits', async () => {
    const body: SocketThermal = (await (await t.signIn('operator')).get(`/api/thermal/rigs/${RIG}/sockets/1`)).body;
    expect(body.flagged).toBe(true);
    expect(body.trendMinFits).toBe(TREND_MIN_FITS);
    const tr = body.trend!;
    expect(tr.n).toBeGreaterThanOrEqual(TREND_MIN_FITS);
    expect(tr.significant).toBe(true);
    // Theil–Sen on the identified θ recovers the simulator's rate within 20 % (a stated tolerance).
    expect(Math.abs(tr.slopeCPerWPerH / PAD_RATE - 1)).toBeLessThan(0.2);
    expect(tr.lowCPerWPerH).toBeLessThanOrEqual(tr.slopeCPerWPerH);
    expect(tr.highCPerWPerH).toBeGreaterThanOrEqual(tr.slopeCPerWPerH);
    expect(body.history.some((f) => f.trendPoint)).toBe(true);
    const rules = await t.db.ds.query(
      `SELECT DISTINCT flag_rule FROM socket_thermal_fits WHERE rig_id = $1 AND socket_index = 1 AND flag_rule IS NOT NULL ORDER BY 1`,
      [fx.rig.id],
    );
    expect(rules.map((r: { flag_rule: string }) => r.flag_rule)).toEqual(['step', 'trend']);
  });

  it('the healthy socket: not flagged by either rule; its trend (enough fits) is not firing', async () => {
    const alarms = await t.db.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id, kind: 'thermal-path' } });
    expect(alarms.map((a) => a.socketIndex)).toEqual([1]);
    const body: SocketThermal = (await (await t.signIn('operator')).get(`/api/thermal/rigs/${RIG}/sockets/0`)).body;
    expect(body.flagged).toBe(false);
    expect(body.flagRule).toBeNull();
    expect(body.trend!.n).toBeGreaterThanOrEqual(TREND_MIN_FITS);
    expect(body.trend!.fires).toBe(false);
    expect(Math.abs(body.trend!.slopeCPerWPerH)).toBeLessThan(PAD_RATE / 5);
  });

  it('a restarted tracker rebuilds the pad’s trend series from the stored good fits', async () => {
    const fresh = new ThermalTracker(t.ctx);
    fresh.start();
    // One message is enough to create the rig's slot and the socket's track from the database.
    const last = await t.db.ds.query(`SELECT max(stress_clock_s) AS s FROM socket_thermal_fits WHERE rig_id = $1`, [fx.rig.id]);
    t.ctx.events.emit(TELEMETRY_LANDED, {
      rigId: fx.rig.id,
      rigCode: RIG,
      seq: 10_000,
      ts: new Date(),
      stressClockS: Number(last[0].s) + STEP_S,
      chamberC: 60,
      humidityPct: null,
      setpointC: 60,
      socket: [0, 1],
      caseC: [64, 66],
      vV: [20, 20],
      iA: [0.1, 0.1],
      flags: [socketFlags(true, false), socketFlags(true, false)],
    });
    await fresh.idle();
    await fresh.stop();
    const points = (fresh as unknown as { rigs: Map<string, { sockets: Map<number, { track: { trend: { points: unknown[] } } }> }> }).rigs
      .get(fx.rig.id)!
      .sockets.get(1)!.track.trend.points;
    expect(points.length).toBeGreaterThanOrEqual(TREND_MIN_FITS);
  });
});
