/**
 * Protection: the physics simulator (rig-simulator startRig) on an accelerated clock, through the
 * real broker and the real API process with live protection and the scheduler on.
 *
 * 8 rigs × 12 sockets (two in real time, six at 10 stress s per wall s: see clockOf), each rig with an active run in the database ('stressing', a powered-life
 * plan whose bias and chamber match the rig, the socket map pointing at devices of a device type
 * with the simulator part's ratings: Tj max 150 °C, θjc 1.5 °C/W). On every rig 3 sockets carry the
 * `poorHeatSink` fault — 24 injected sockets with different heat-sink failures (θca 12…30 °C/W,
 * degrading at 0 (poor from the start) … 240 °C/W per stress hour), bias (12…30 V, IB 2.5…5 mA)
 * and chambers (60…90 °C); the other 72 sockets are sound (θca 2 °C/W) and settle below ~120 °C.
 * Without protection every injected socket passes Tj max within 520 stress seconds of bias on
 * (checked offline with the same pure physics); the run lasts 70 wall s (700 stress s at 10×,
 * 70 s in real time, where the fault needs ~30 s).
 *
 * Observation without touching the simulator's code: the bench taps each rig's outbox.add, which
 * the rig calls once per sample right after stepping its physics, and reads the rig's TRUE state
 * there. The physics only changes at a sample, so the trip command arrived between the last sample
 * showing the socket untripped and the first showing it tripped, and the true junction temperature
 * at its arrival is the one of that last untripped sample.
 *   injected            sockets with the fault
 *   trippedBeforeTjMax  injected sockets tripped with the true Tj (and every Tj before it) < Tj max
 *   falseTrips          sound sockets tripped
 *   medianDetectSeconds stress-clock seconds from fault onset (bias on, when the heat sink starts
 *                       failing) to the trip's arrival at the rig; medianDetectWallSeconds alike in wall time
 */
import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { initialRigState, startRig, type RigConfig, type RigHandle } from '../../rig-simulator';
import { DEMO_PART } from '../../rig-simulator/physics';
import { METHOD_CHAMBER_BAND_K } from '../../shared/domain/standards';
import type { BenchEnv } from '../lib/environment';
import { BENCH_CLOCK_RATE } from '../lib/environment';
import { percentile, round } from '../lib/http';
import { SETTINGS } from '../lib/settings';

export interface ProtectionResult {
  injected: number;
  trippedBeforeTjMax: number;
  falseTrips: number;
  medianDetectSeconds: number | null;
  [extra: string]: unknown;
}

const SOCKETS = 12;
const INJECTED = [1, 6, 10];
/** Per rig: chamber, bias (VCE, IB) and the heat-sink failure of its 3 injected sockets. */
const RIGS: Array<{ chamberC: number; vV: number; iA: number; thetaCaCPerW: number; rampCPerWPerH: number }> = [
  { chamberC: 80, vV: 20, iA: 0.004, thetaCaCPerW: 24, rampCPerWPerH: 0 },
  { chamberC: 75, vV: 15, iA: 0.005, thetaCaCPerW: 30, rampCPerWPerH: 0 },
  { chamberC: 70, vV: 25, iA: 0.003, thetaCaCPerW: 18, rampCPerWPerH: 45 },
  { chamberC: 80, vV: 20, iA: 0.004, thetaCaCPerW: 14, rampCPerWPerH: 60 },
  { chamberC: 90, vV: 12, iA: 0.005, thetaCaCPerW: 20, rampCPerWPerH: 120 },
  { chamberC: 80, vV: 30, iA: 0.0025, thetaCaCPerW: 12, rampCPerWPerH: 240 },
  { chamberC: 85, vV: 18, iA: 0.004, thetaCaCPerW: 24, rampCPerWPerH: 45 },
  { chamberC: 60, vV: 28, iA: 0.0035, thetaCaCPerW: 16, rampCPerWPerH: 90 },
];
/**
 * Every rig reports once per stress second, like a rig sampling at 1 Hz. Heat sinks that fail
 * gradually (ramp > 0: 150–520 stress s to Tj max) run on the accelerated clock, 10 stress s per
 * wall s. A socket with no heat sinking from the start (ramp 0) reaches Tj max ~30 s after bias on;
 * those rigs run in real time, because acceleration compresses only the rig's physics, not the
 * network, database and protection latency: at 10× one wall second of round trip is ten stress
 * seconds, longer than the ~4 s the fault takes from the 140 °C trip line to Tj max (a first
 * development run with every rig at 10× tripped these 6 sockets 2–13 °C past Tj max).
 */
const clockOf = (spec: (typeof RIGS)[number]) => (spec.rampCPerWPerH > 0 ? BENCH_CLOCK_RATE : 1 / 3600);
const sampleWallS = (spec: (typeof RIGS)[number]) => 1 / (clockOf(spec) * 3600);

interface SocketWatch {
  rig: string;
  socket: number;
  injected: boolean;
  tjMaxC: number;
  onsetClockS: number | null;
  onsetWallMs: number | null;
  lastTjC: number;
  lastClockS: number;
  peakTjBeforeTripC: number;
  trippedAtClockS: number | null;
  trippedWallMs: number | null;
  tjAtTripC: number | null;
  reason: string | null;
  destroyedBeforeTrip: boolean;
}

const pad = (n: number) => String(n).padStart(2, '0');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function createFixtures(b: BenchEnv, configs: RigConfig[]): Promise<void> {
  const m = b.ds.manager;
  const [type] = await m.query(
    `INSERT INTO device_types (part_number, description, kind, polarity, bvcbo_v, bvceo_v, bvebo_v, ic_max_a, p_max_w, tj_max_c,
       theta_jc_c_per_w, theta_ja_c_per_w, beta_ref, beta_ref_ic_a, beta_ref_tc, xtb, icbo_ref_a)
     VALUES ($1, 'TO-220-class NPN power transistor (the rig simulator''s part)', 'bjt', 'NPN', $2, 160, 7, 8, 60, $3, $4, 62, $5, 0.5, $6, $7, $8)
     RETURNING id`,
    [
      DEMO_PART.partNumber,
      DEMO_PART.bvcboV,
      DEMO_PART.tjMaxC,
      DEMO_PART.thetaJcCPerW,
      DEMO_PART.betaRef,
      DEMO_PART.betaRefTC,
      DEMO_PART.xtb,
      DEMO_PART.icboRefA,
    ],
  );
  const lotIds = new Map<string, string>();
  for (const cfg of configs) {
    const state = initialRigState(cfg);
    const k = configs.indexOf(cfg);
    const spec = RIGS[k];
    const hash = await bcrypt.hash(cfg.password, 8);
    const [rig] = await m.query(
      `INSERT INTO rigs (code, name, location, socket_count, max_temp_c, max_voltage_v, mqtt_username, mqtt_secret_hash, credentials_issued_at)
       VALUES ($1, $2, 'Bench bay P', $3, 250, 100, $4, $5, now()) RETURNING id`,
      [cfg.rigCode, `Protection bench ${cfg.rigCode}`, SOCKETS, cfg.username, hash],
    );
    const deviceIds: string[] = [];
    for (const s of state.sockets) {
      let lotId = lotIds.get(s.device.lotCode);
      if (!lotId) {
        const [lot] = await m.query(
          `INSERT INTO lots (code, device_type_id, quantity, date_code, notes) VALUES ($1, $2, 500, '2610', 'Protection bench lot') RETURNING id`,
          [s.device.lotCode, type.id],
        );
        lotId = lot.id as string;
        lotIds.set(s.device.lotCode, lotId);
      }
      const [d] = await m.query(`INSERT INTO devices (lot_id, serial) VALUES ($1, $2) RETURNING id`, [lotId, s.device.serial]);
      deviceIds.push(d.id);
    }
    const [plan] = await m.query(
      `INSERT INTO stress_plans (plan_key, version, name, kind, device_type_id, chamber_c, humidity_pct, bias, duration_h, read_points_h,
         sample_size, accept_number, criteria, notes, chamber_band)
       VALUES ($1, 1, $2, 'hotl', $3, $4, NULL, $5, 1000, '[0, 1000]', $6, 0, $7, 'Protection bench plan', $8) RETURNING id`,
      [
        randomUUID(),
        `Powered life ${spec.chamberC} °C, VCE ${spec.vV} V, IB ${spec.iA * 1000} mA (bench ${cfg.rigCode})`,
        type.id,
        spec.chamberC,
        JSON.stringify({ vcbV: null, vebV: null, vceV: spec.vV, ibA: spec.iA, icA: null, tolerancePct: 5 }),
        SOCKETS,
        JSON.stringify({ hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 }),
        JSON.stringify(METHOD_CHAMBER_BAND_K.hotl),
      ],
    );
    const [run] = await m.query(
      `INSERT INTO runs (code, plan_id, rig_id, state, sample_size, started_at, state_changed_at, heating_since, ambient_reached_at, next_read_point, row_version)
       VALUES ($1, $2, $3, 'stressing', $4, now(), now(), now() - interval '1 hour', now(), 1, 1) RETURNING id`,
      [`PB-${cfg.rigCode}`, plan.id, rig.id, SOCKETS],
    );
    for (const lotId of new Set(state.sockets.map((s) => lotIds.get(s.device.lotCode)!))) {
      await m.query(`INSERT INTO run_lots (run_id, lot_id) VALUES ($1, $2)`, [run.id, lotId]);
    }
    for (let i = 0; i < deviceIds.length; i++) {
      await m.query(`INSERT INTO run_sockets (run_id, socket_index, device_id) VALUES ($1, $2, $3)`, [run.id, i, deviceIds[i]]);
    }
  }
}

export async function runProtection(b: BenchEnv, log: (l: string) => void): Promise<ProtectionResult> {
  const seconds = SETTINGS.protection.seconds;
  const configs: RigConfig[] = RIGS.map((spec, k) => {
    const rigCode = `BP-${pad(k + 1)}`;
    return {
      rigCode,
      brokerUrl: b.mqttUrl,
      username: `rig-${rigCode.toLowerCase()}`,
      password: `bench-${rigCode.toLowerCase()}-secret`,
      firmware: 'hpd-sim 1.0',
      sockets: SOCKETS,
      mode: 'powered',
      lots: ['HPD-L2403', 'HPD-L2411'],
      serialStart: 1 + k * SOCKETS,
      chamberC: spec.chamberC,
      setpointC: spec.chamberC,
      biasOn: true,
      vV: spec.vV,
      iA: spec.iA,
      stressHoursPerWallSecond: clockOf(spec),
      samplePeriodWallS: sampleWallS(spec),
      reconnectWallS: 0.2,
      resendAfterWallS: 2,
      seed: 7000 + k,
      faults: {
        noise: { tempC: 0.2, currentPct: 0.5 },
        poorHeatSink: { sockets: INJECTED, thetaCaCPerW: spec.thetaCaCPerW, rampCPerWPerH: spec.rampCPerWPerH },
      },
    };
  });
  await createFixtures(b, configs);

  const watches: SocketWatch[] = [];
  const rigs: RigHandle[] = [];
  const t0 = Date.now();
  for (const cfg of configs) {
    const rig = startRig(cfg);
    rigs.push(rig);
    const mine: SocketWatch[] = rig.state().sockets.map((s) => ({
      rig: cfg.rigCode,
      socket: s.i,
      injected: INJECTED.includes(s.i),
      tjMaxC: s.device.tjMaxC,
      onsetClockS: null,
      onsetWallMs: null,
      lastTjC: s.tjC,
      lastClockS: 0,
      peakTjBeforeTripC: s.tjC,
      trippedAtClockS: null,
      trippedWallMs: null,
      tjAtTripC: null,
      reason: null,
      destroyedBeforeTrip: false,
    }));
    watches.push(...mine);
    // Read-only tap: the rig calls outbox.add(seq, payload) once per sample, right after stepping
    // its physics, so rig.state() there is the true state the sample was built from.
    const outbox = rig.outbox;
    const add = outbox.add.bind(outbox);
    let prevClock = 0;
    outbox.add = (seq: number, payload: string) => {
      add(seq, payload);
      const st = rig.state();
      const now = Date.now();
      for (const w of mine) {
        const s = st.sockets[w.socket];
        if (w.trippedAtClockS !== null) continue;
        if (s.tripped) {
          // Arrived after the previous sample: the true Tj then was the previous sample's.
          w.trippedAtClockS = w.lastClockS;
          w.tjAtTripC = w.lastTjC;
          w.trippedWallMs = now;
          w.reason = s.tripReason;
          continue;
        }
        if (w.onsetClockS === null && s.biasOn) {
          // Bias (and with it the heat-sink failure) starts with the interval ending at this sample.
          w.onsetClockS = prevClock;
          w.onsetWallMs = now;
        }
        if (s.destroyed) w.destroyedBeforeTrip = true;
        w.lastTjC = s.tjC;
        w.lastClockS = st.stressClockS;
        w.peakTjBeforeTripC = Math.max(w.peakTjBeforeTripC, s.tjC);
      }
      prevClock = st.stressClockS;
    };
  }

  const deadline = t0 + seconds * 1000;
  let lastLog = Date.now();
  while (Date.now() < deadline) {
    await sleep(200);
    if (Date.now() - lastLog >= 10_000) {
      lastLog = Date.now();
      const tripped = watches.filter((w) => w.injected && w.trippedAtClockS !== null).length;
      log(
        `  protection: ${Math.round((Date.now() - t0) / 1000)} s, ${tripped}/${watches.filter((w) => w.injected).length} injected sockets tripped, ${watches.filter((w) => !w.injected && w.trippedAtClockS !== null).length} sound sockets tripped`,
      );
    }
  }
  const connects = rigs.map((r) => r.stats.connects);
  const unconfirmed = rigs.reduce((n, r) => n + r.outbox.size, 0);
  await Promise.all(rigs.map((r) => r.stop()));

  const injected = watches.filter((w) => w.injected);
  const sound = watches.filter((w) => !w.injected);
  const tripped = injected.filter((w) => w.trippedAtClockS !== null);
  const beforeMax = tripped.filter((w) => !w.destroyedBeforeTrip && w.peakTjBeforeTripC < w.tjMaxC && (w.tjAtTripC ?? Infinity) < w.tjMaxC);
  const falseTrips = sound.filter((w) => w.trippedAtClockS !== null);
  const detectS = tripped.map((w) => w.trippedAtClockS! - (w.onsetClockS ?? 0));
  const detectWallS = tripped.map((w) => (w.trippedWallMs! - (w.onsetWallMs ?? t0)) / 1000);
  const margins = tripped.map((w) => w.tjMaxC - w.tjAtTripC!);
  const byRule = (re: RegExp) => tripped.filter((w) => re.test(w.reason ?? '')).length;
  const alarms = await b.pool.query(
    `SELECT r.code, a.socket_index, a.details->>'command' AS command FROM alarms a JOIN rigs r ON r.id = a.rig_id
      WHERE a.kind = 'runaway-trip' AND r.code LIKE 'BP-%'`,
  );
  const median = (a: number[]) => (a.length ? percentile(a, 50) : null);
  return {
    injected: injected.length,
    trippedBeforeTjMax: beforeMax.length,
    falseTrips: falseTrips.length,
    medianDetectSeconds: median(detectS) === null ? null : round(median(detectS)!, 1),
    detectClock: 'stress-clock seconds from bias on (when the injected heat sink starts failing) to the trip arriving at the rig',
    medianDetectWallSeconds: median(detectWallS) === null ? null : round(median(detectWallS)!, 2),
    maxDetectSeconds: detectS.length ? round(Math.max(...detectS), 1) : null,
    minMarginToTjMaxC: margins.length ? round(Math.min(...margins), 1) : null,
    medianMarginToTjMaxC: margins.length ? round(percentile(margins, 50), 1) : null,
    soundSockets: sound.length,
    soundPeakTjC: round(Math.max(...sound.map((w) => w.peakTjBeforeTripC)), 1),
    notTripped: injected.filter((w) => w.trippedAtClockS === null).map((w) => `${w.rig}/${w.socket}`),
    trippedAfterTjMax: tripped.filter((w) => !beforeMax.includes(w)).map((w) => `${w.rig}/${w.socket} Tj ${round(w.tjAtTripC!, 1)} °C`),
    falseTripSockets: falseTrips.map((w) => `${w.rig}/${w.socket}: ${w.reason}`),
    tripsByRule: {
      threshold: byRule(/within \d+ °C of the rating/),
      projection: byRule(/projected to reach/),
      loopGain: byRule(/loop gain/),
    },
    runawayTripAlarms: alarms.rowCount,
    alarmsConfirmedByRig: alarms.rows.filter((r: { command: string }) => r.command === 'confirmed').length,
    clockStressSecondsPerWallSecond: { gradualFaultRigs: round(BENCH_CLOCK_RATE * 3600, 2), noHeatSinkRigs: 1 },
    sampleStressSeconds: 1,
    peakTjNotTrippedC: injected
      .filter((w) => w.trippedAtClockS === null)
      .map((w) => `${w.rig}/${w.socket} ${round(w.peakTjBeforeTripC, 1)} °C`),
    wallSeconds: seconds,
    rigs: RIGS.length,
    rigConnects: connects.reduce((a, c) => a + c, 0),
    unconfirmedAtEnd: unconfirmed,
  };
}
