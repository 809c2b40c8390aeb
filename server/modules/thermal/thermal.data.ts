/** The SQL of the socket thermal model: its identifications (socket_thermal_fits) and the rig's active run. */
import type { DataSource } from 'typeorm';
import { ON_RIG_STATES } from '../../../shared/domain/run-states';
import type { ThermalFit } from '../../../shared/schemas/thermal';

export interface FitRow extends ThermalFit {
  rigId: string;
  runId: string | null;
  socketIndex: number;
  baselineThetaCPerW: number | null;
}

export async function insertFit(ds: DataSource, r: FitRow): Promise<void> {
  await ds.query(
    `INSERT INTO socket_thermal_fits (rig_id, run_id, socket_index, identified_at, stress_clock_s, trigger, identifiable, good, method,
        theta_c_per_w, tau_s, tau_note, offset_c, offset_basis, r2, rms_c, samples, sample_interval_s, mean_power_w,
        baseline_theta_c_per_w, rise_fraction, reason, trend, trend_point, flag_rule)
     VALUES ($1,$2,$3,$4,$5,$6,$7,$8,$9,$10,$11,$12,$13,$14,$15,$16,$17,$18,$19,$20,$21,$22,$23,$24,$25)`,
    [
      r.rigId,
      r.runId,
      r.socketIndex,
      r.identifiedAt,
      r.stressClockS,
      r.trigger,
      r.identifiable,
      r.good,
      r.method,
      r.thetaCPerW,
      r.tauS,
      r.tauNote,
      r.offsetC,
      r.offsetBasis,
      r.r2,
      r.rmsC,
      r.samples,
      r.sampleIntervalS,
      r.meanPowerW,
      r.baselineThetaCPerW,
      r.riseFraction,
      r.reason,
      r.trend === null ? null : JSON.stringify(r.trend),
      r.trendPoint,
      r.flagRule,
    ],
  );
}

interface RawFit {
  identified_at: Date;
  stress_clock_s: number;
  trigger: ThermalFit['trigger'];
  identifiable: boolean;
  good: boolean;
  method: ThermalFit['method'];
  theta_c_per_w: number | null;
  tau_s: number | null;
  tau_note: string | null;
  offset_c: number | null;
  offset_basis: ThermalFit['offsetBasis'];
  r2: number | null;
  rms_c: number | null;
  samples: number;
  sample_interval_s: number | null;
  mean_power_w: number;
  rise_fraction: number | null;
  reason: string | null;
  baseline_theta_c_per_w: number | null;
  trend: ThermalFit['trend'];
  trend_point: boolean;
  flag_rule: ThermalFit['flagRule'];
}

const toFit = (r: RawFit): ThermalFit => ({
  identifiedAt: new Date(r.identified_at).toISOString(),
  stressClockS: Number(r.stress_clock_s),
  trigger: r.trigger,
  identifiable: r.identifiable,
  good: r.good,
  method: r.method,
  thetaCPerW: r.theta_c_per_w,
  tauS: r.tau_s,
  tauNote: r.tau_note,
  offsetC: r.offset_c,
  offsetBasis: r.offset_basis,
  r2: r.r2,
  rmsC: r.rms_c,
  samples: r.samples,
  sampleIntervalS: r.sample_interval_s,
  meanPowerW: r.mean_power_w,
  riseFraction: r.rise_fraction,
  reason: r.reason,
  trend: r.trend,
  trendPoint: r.trend_point,
  flagRule: r.flag_rule,
});

/** A socket's identifications in a run (or with no run), oldest first, the newest `limit`. */
export async function fitsOfSocket(
  ds: DataSource,
  rigId: string,
  runId: string | null,
  socket: number,
  limit = 200,
): Promise<{ fits: ThermalFit[]; baselineThetaCPerW: number | null }> {
  const rows: RawFit[] = await ds.query(
    `SELECT * FROM (
       SELECT * FROM socket_thermal_fits
        WHERE rig_id = $1 AND socket_index = $3 AND run_id IS NOT DISTINCT FROM $2
        ORDER BY identified_at DESC, id DESC LIMIT $4) f
      ORDER BY identified_at, id`,
    [rigId, runId, socket, limit],
  );
  const base: Array<{ theta: number | null }> = await ds.query(
    `SELECT baseline_theta_c_per_w AS theta FROM socket_thermal_fits
      WHERE rig_id = $1 AND socket_index = $3 AND run_id IS NOT DISTINCT FROM $2 AND baseline_theta_c_per_w IS NOT NULL
      ORDER BY identified_at, id LIMIT 1`,
    [rigId, runId, socket],
  );
  return { fits: rows.map(toFit), baselineThetaCPerW: base[0]?.theta ?? null };
}

/** The run's baseline θ per socket, as first stored (a restarted server keeps comparing against the same one). */
export async function baselinesOfRun(ds: DataSource, rigId: string, runId: string): Promise<Map<number, number>> {
  const rows: Array<{ socket_index: number; theta: number }> = await ds.query(
    `SELECT DISTINCT ON (socket_index) socket_index, baseline_theta_c_per_w AS theta FROM socket_thermal_fits
      WHERE rig_id = $1 AND run_id = $2 AND baseline_theta_c_per_w IS NOT NULL ORDER BY socket_index, identified_at, id`,
    [rigId, runId],
  );
  return new Map(rows.map((r) => [Number(r.socket_index), Number(r.theta)]));
}

/** The run's good fits after each socket's baseline, oldest first (a restarted tracker rebuilds the trend's series from them). */
export async function trendFitsOfRun(
  ds: DataSource,
  rigId: string,
  runId: string,
): Promise<Map<number, Array<{ tH: number; thetaCPerW: number; windowH: number }>>> {
  const rows: Array<{ socket_index: number; t_h: number; theta: number; window_h: number }> = await ds.query(
    `SELECT socket_index, stress_clock_s / 3600.0 AS t_h, theta_c_per_w AS theta, samples * COALESCE(sample_interval_s, 0) / 3600.0 AS window_h
       FROM socket_thermal_fits
      WHERE rig_id = $1 AND run_id = $2 AND good AND theta_c_per_w IS NOT NULL AND baseline_theta_c_per_w IS NOT NULL
      ORDER BY socket_index, identified_at, id`,
    [rigId, runId],
  );
  const out = new Map<number, Array<{ tH: number; thetaCPerW: number; windowH: number }>>();
  for (const r of rows) {
    const list = out.get(Number(r.socket_index)) ?? [];
    list.push({ tH: Number(r.t_h), thetaCPerW: Number(r.theta), windowH: Number(r.window_h) });
    out.set(Number(r.socket_index), list);
  }
  return out;
}

/** The rig's active run (most recently changed) and the stress hours its plan still has, or null. */
export async function activeRunOfRig(
  ds: DataSource,
  rigId: string,
): Promise<{ id: string; code: string; remainingH: number | null } | null> {
  const rows: Array<{ id: string; code: string; remaining_h: number | null }> = await ds.query(
    `SELECT r.id, r.code, GREATEST(p.duration_h - r.stress_hours, 0) AS remaining_h
       FROM runs r LEFT JOIN stress_plans p ON p.id = r.plan_id
      WHERE r.rig_id = $1 AND r.state = ANY($2) ORDER BY r.state_changed_at DESC LIMIT 1`,
    [rigId, [...ON_RIG_STATES]],
  );
  const r = rows[0];
  return r ? { id: r.id, code: r.code, remainingH: r.remaining_h === null ? null : Number(r.remaining_h) } : null;
}

/** The rule that last raised this socket's flag in the run, or null. */
export async function lastFlagRule(ds: DataSource, rigId: string, runId: string | null, socket: number): Promise<'step' | 'trend' | null> {
  const rows: Array<{ rule: 'step' | 'trend' }> = await ds.query(
    `SELECT flag_rule AS rule FROM socket_thermal_fits
      WHERE rig_id = $1 AND socket_index = $3 AND run_id IS NOT DISTINCT FROM $2 AND flag_rule IS NOT NULL
      ORDER BY identified_at DESC, id DESC LIMIT 1`,
    [rigId, runId, socket],
  );
  return rows[0]?.rule ?? null;
}

export async function rigByCode(ds: DataSource, code: string): Promise<{ id: string; code: string } | null> {
  const rows: Array<{ id: string; code: string }> = await ds.query(`SELECT id, code FROM rigs WHERE code = $1`, [code]);
  return rows[0] ?? null;
}

/** Is a thermal-path alarm for this socket live (unacknowledged or still active)? */
export async function thermalFlagLive(ds: DataSource, rigId: string, socket: number): Promise<boolean> {
  const rows: unknown[] = await ds.query(
    `SELECT 1 FROM alarms WHERE kind = 'thermal-path' AND rig_id = $1 AND socket_index = $2
        AND (acknowledged_at IS NULL OR cleared_at IS NULL) LIMIT 1`,
    [rigId, socket],
  );
  return rows.length > 0;
}
