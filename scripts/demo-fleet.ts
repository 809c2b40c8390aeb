/**
 * Writes the rig simulator's fleet file for the demo from the database: one simulated rig per
 * registered rig (demo secrets), the devices of each rig's active run in its sockets with their
 * lot's drift, and the run's bias. Rigs without an active run idle at room temperature.
 * Two sockets of the first powered-life run get poor heat sinking, so live protection has a
 * runaway to catch in the demo, and one a slowly drying thermal pad for the thermal model's flag.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { DataSource } from 'typeorm';
import { ON_RIG_STATES } from '../shared/domain/run-states';
import { chamberSetpointC, type ChamberBandK } from '../shared/domain/standards';
import { REVERSE_BIAS_KINDS, isCyclingKind, PLAN_KINDS } from '../shared/domain/stress';

const isCyclingKindName = (kind: string): boolean => PLAN_KINDS.some((k) => k === kind && isCyclingKind(k));
import type { Bias } from '../shared/schemas/plans';
import { DEMO_LOTS, demoRigSecret, rigMqttUsername } from '../server/seed/demo-data';

const IDLE_SOCKETS = 4;
/** The demo's socket with a drying thermal pad (on the rig with the injected runaways). */
export const DRYING_PAD_SOCKET = 2;
/** Wall seconds between messages: 0.5 s = half a stress hour at the default clock. */
const DEMO_SAMPLE_S = 0.5;

interface SocketRow {
  socket_index: number;
  serial: string;
  lot_code: string;
  part_number: string;
  beta_ref: number;
  beta_ref_tc: number;
  xtb: number;
  icbo_ref_a: number | null;
  theta_jc_c_per_w: number;
  theta_ja_c_per_w: number;
  tj_max_c: number;
}

function spread(seed: string, pct: number): number {
  let h = 2166136261;
  for (const c of seed) h = Math.imul(h ^ c.charCodeAt(0), 16777619);
  const u = ((h >>> 0) % 10000) / 10000; // 0..1
  return 1 + (u * 2 - 1) * pct;
}

/**
 * A chamber for the unbiased kinds (rig-simulator/chamber.ts). The cycling chamber runs a slower
 * clock than the ovens — 4 chamber minutes per wall second, a report every 0.4 s (1.6 chamber min) —
 * because the server counts a cycle only when two consecutive reports lie inside an extreme's band
 * for the dwell (10 min): at the ovens' 1 h per second a whole dwell would fall between two reports.
 * A JESD22-A104 condition B cycle (about 64 chamber minutes with the load's lag) then takes about
 * 16 wall seconds, so the floor shows the count moving. The storage / autoclave vessel runs the
 * ovens' clock (1 stress h per wall second, a report every 0.5 s).
 */
export const DEMO_CYCLING_CHAMBER_PACE = { minutesPerWallSecond: 4, samplePeriodWallS: 0.4 } as const;

function chamberEntry(
  rig: { code: string; humidity_capable: boolean; max_temp_c: number; min_temp_c: number | null; max_pressure_k_pa: number | null },
  base: Record<string, unknown>,
): Record<string, unknown> {
  const cycling = rig.min_temp_c !== null;
  return {
    rigCode: rig.code,
    username: base.username,
    password: base.password,
    minTempC: rig.min_temp_c ?? 20,
    maxTempC: rig.max_temp_c,
    humidityCapable: rig.humidity_capable,
    pressureVessel: rig.max_pressure_k_pa !== null,
    ...(cycling ? DEMO_CYCLING_CHAMBER_PACE : { minutesPerWallSecond: 60, samplePeriodWallS: DEMO_SAMPLE_S }),
  };
}

/**
 * A power-cycling bench: the parts sit in free air (case-to-ambient = θja − θjc, a short case time
 * constant) so the on-time swings the junction by the planned ΔTj; the clock runs at 120 stress
 * seconds per wall second (a message per minute of stress, two per on-time) — 15,000 cycles of
 * 2 + 2 min take about 8 wall hours, so the demo shows the count moving, not the end.
 */
function cyclingBench(sockets: SocketRow[]): Record<string, unknown> {
  const s = sockets[0];
  return {
    thetaCaCPerW: Math.max(1, Number(s.theta_ja_c_per_w) - Number(s.theta_jc_c_per_w)),
    caseTauStressS: 15,
    stressHoursPerWallSecond: 120 / 3600,
  };
}

export async function writeDemoFleet(ds: DataSource, file: string): Promise<{ rigs: number; chambers: number; loaded: number }> {
  const rigs: Array<{
    id: string;
    code: string;
    kind: string;
    socket_count: number;
    humidity_capable: boolean;
    max_temp_c: number;
    min_temp_c: number | null;
    max_pressure_k_pa: number | null;
  }> = await ds.query(
    `SELECT id, code, kind, socket_count, humidity_capable, max_temp_c, min_temp_c, max_pressure_k_pa FROM rigs WHERE active ORDER BY code`,
  );
  const runs: Array<{
    id: string;
    rig_id: string;
    state: string;
    kind: string;
    chamber_c: number;
    chamber_band: ChamberBandK;
    humidity_pct: number | null;
    bias: Partial<Bias> | null;
  }> = await ds.query(
    `SELECT r.id, r.rig_id, r.state, p.kind, p.chamber_c, p.chamber_band, p.humidity_pct, p.bias
         FROM runs r JOIN stress_plans p ON p.id = r.plan_id
        WHERE r.rig_id IS NOT NULL AND r.state = ANY($1) ORDER BY r.created_at`,
    [ON_RIG_STATES],
  );
  let faultPlaced = false;
  let loaded = 0;
  const fleet = {
    defaults: { samplePeriodWallS: DEMO_SAMPLE_S, firmware: 'hpd-sim 1.0', faults: { noise: { tempC: 0.2, currentPct: 0.5 } } },
    rigs: [] as Array<Record<string, unknown>>,
    chambers: [] as Array<Record<string, unknown>>,
  };
  for (const rig of rigs) {
    const base = {
      rigCode: rig.code,
      username: rigMqttUsername(rig.code),
      password: demoRigSecret(rig.code),
      humidityCapable: rig.humidity_capable,
      maxTempC: rig.max_temp_c,
    };
    if (rig.kind === 'chamber') {
      // Nothing biased to simulate: the chamber takes its programme from the scheduler's setpoint command.
      fleet.chambers.push(chamberEntry(rig, base));
      continue;
    }
    const run = runs.find((r) => r.rig_id === rig.id);
    const sockets: SocketRow[] = run
      ? await ds.query(
          `SELECT s.socket_index, d.serial, l.code AS lot_code, t.part_number, t.beta_ref, t.beta_ref_tc, t.xtb, t.icbo_ref_a,
                  t.theta_jc_c_per_w, t.theta_ja_c_per_w, t.tj_max_c
             FROM run_sockets s JOIN devices d ON d.id = s.device_id JOIN lots l ON l.id = d.lot_id
             JOIN device_types t ON t.id = l.device_type_id
            WHERE s.run_id = $1 ORDER BY s.socket_index`,
          [run.id],
        )
      : [];
    if (!run || sockets.length === 0) {
      fleet.rigs.push({ ...base, sockets: IDLE_SOCKETS, mode: 'reverse', biasOn: false, chamberC: 25, setpointC: 25, vV: 0, iA: 0.001 });
      continue;
    }
    loaded += sockets.length;
    const reverse = REVERSE_BIAS_KINDS.has(run.kind);
    const devices = sockets.map((s) => {
      const lot = DEMO_LOTS.find((l) => l.code === s.lot_code);
      return {
        serial: s.serial,
        partNumber: s.part_number,
        lotCode: s.lot_code,
        // A sorted hFE bin (±3 %): a regulated-current plan then sees its current within tolerance.
        betaRef: s.beta_ref * spread(s.serial, 0.03),
        betaRefTC: s.beta_ref_tc,
        xtb: s.xtb,
        icboRefA: (s.icbo_ref_a ?? 20e-9) * spread(`${s.serial}:i`, 0.3),
        icboRefTC: 25,
        doublingC: 10,
        thetaJcCPerW: s.theta_jc_c_per_w,
        tjMaxC: s.tj_max_c,
        hfeDriftPctPer1000h: lot?.hfeDriftPctPer1000h ?? -2,
        leakageRatioPer1000h: lot?.leakageGrowthPer1000h ?? 1.2,
        failMode: 'short' as const,
      };
    });
    const stressing = run.state === 'stressing';
    const cycling = isCyclingKindName(run.kind);
    const bias = run.bias ?? {};
    const entry: Record<string, unknown> = {
      ...base,
      devices,
      mode: reverse ? 'reverse' : 'powered',
      // A cycling bench starts unbiased: the scheduler's bias command brings the on/off program.
      biasOn: stressing && !cycling,
      chamberC: stressing ? chamberSetpointC(run.chamber_c, run.chamber_band) : 25,
      setpointC: stressing ? chamberSetpointC(run.chamber_c, run.chamber_band) : 25,
      humidityPct: run.humidity_pct,
      vV: reverse ? (bias.vcbV ?? 0) : (bias.vceV ?? 0),
      // Powered: the plan's forced IB, or the collector current the rig regulates (icA).
      ...(reverse ? { iA: 0.001 } : bias.icA ? { icA: bias.icA } : { iA: bias.ibA ?? 0.001 }),
    };
    if (cycling) Object.assign(entry, cyclingBench(sockets));
    if (!reverse && !cycling && !faultPlaced && devices.length > 5) {
      // Sockets 5 and 11: their thermal pads dry out, the case-to-chamber resistance climbing toward
      // 60 °C/W at 60 °C/W per stress hour, and each junction heads for Tj max until protection trips
      // it. This rig runs a slower clock (0.04 stress h per wall second, 72 stress seconds between
      // samples): at the demo's 1 h/s a whole runaway fits between two samples, which no trip can beat.
      // Measured offline with the simulator's physics: trip at 0.56 stress h with true Tj ≈ 141 °C.
      // Socket 2: a drying thermal pad, θca 2 → 60 °C/W at 0.5 °C/W per stress hour (an hour of stress
      // is 25 wall seconds here): the thermal model flags it after a stress hour or two (θ past its
      // settled first value + 25 %, shared/thermal/rules.ts); protection would trip it only near
      // θca 55 (Tj max − 10 °C at the run's ~1.8 W), some 100 stress hours later.
      entry.faults = {
        noise: { tempC: 0.2, currentPct: 0.5 },
        poorHeatSink: { sockets: [5, 11], thetaCaCPerW: 60, rampCPerWPerH: 60 },
        dryingPad: { sockets: [DRYING_PAD_SOCKET], startCPerW: 2, rampCPerWPerH: 0.5, maxCPerW: 60 },
      };
      entry.stressHoursPerWallSecond = 0.04;
      faultPlaced = true;
    }
    fleet.rigs.push(entry);
  }
  fs.mkdirSync(path.dirname(file), { recursive: true });
  fs.writeFileSync(file, JSON.stringify(fleet, null, 2));
  return { rigs: fleet.rigs.length, chambers: fleet.chambers.length, loaded };
}
