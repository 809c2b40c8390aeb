/** SQL of the chamber module: the chambers' reports and the credit of unbiased runs. */
import type { EntityManager } from 'typeorm';
import type { ChamberReport } from '../../../shared/mqtt/chamber';
import type { TcCounterState } from '../../../shared/chamber/profile';

export interface ChamberRow {
  seq: number;
  ts: Date;
  clockS: number;
  airC: number;
  loadC: number;
  setpointC: number;
  humidityPct: number | null;
  pressureKPa: number | null;
  doorOpen: boolean;
}

const COLUMNS = `seq::float8 AS seq, ts, clock_s AS "clockS", air_c AS "airC", load_c AS "loadC", setpoint_c AS "setpointC",
  humidity_pct AS "humidityPct", pressure_k_pa AS "pressureKPa", door_open AS "doorOpen"`;

const toRow = (r: ChamberRow): ChamberRow => ({ ...r, seq: Number(r.seq), ts: new Date(r.ts) });

/** Stores one report (a re-sent seq changes nothing) and the rig's last seen values; the rig id, or null for an unknown rig. */
export async function storeChamberReport(
  m: EntityManager,
  rigCode: string,
  r: ChamberReport,
  at: Date,
): Promise<{ rigId: string; stored: boolean } | null> {
  const rigs: Array<{ id: string }> = await m.query(`SELECT id FROM rigs WHERE code = $1 AND kind = 'chamber'`, [rigCode]);
  if (!rigs.length) return null;
  const rigId = rigs[0].id;
  const inserted: Array<{ seq: string }> = await m.query(
    `INSERT INTO chamber_samples (rig_id, seq, ts, clock_s, air_c, load_c, setpoint_c, humidity_pct, pressure_k_pa, door_open)
     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10) ON CONFLICT (rig_id, seq) DO NOTHING RETURNING seq`,
    [rigId, r.seq, r.ts, r.clockS, r.airC, r.loadC, r.setpointC, r.humidityPct, r.pressureKPa, r.doorOpen],
  );
  await m.query(`UPDATE rigs SET chamber_c = $2, setpoint_c = $3, humidity_pct = $4, last_seen_at = $5, online = true WHERE id = $1`, [
    rigId,
    r.airC,
    r.setpointC,
    r.humidityPct,
    at,
  ]);
  return { rigId, stored: inserted.length > 0 };
}

export async function chamberSamplesAfter(m: EntityManager, rigId: string, afterSeq: number, limit: number): Promise<ChamberRow[]> {
  const rows: ChamberRow[] = await m.query(`SELECT ${COLUMNS} FROM chamber_samples WHERE rig_id = $1 AND seq > $2 ORDER BY seq LIMIT $3`, [
    rigId,
    afterSeq,
    limit,
  ]);
  return rows.map(toRow);
}

export async function chamberSampleAt(m: EntityManager, rigId: string, seq: number): Promise<ChamberRow | null> {
  const rows: ChamberRow[] = await m.query(`SELECT ${COLUMNS} FROM chamber_samples WHERE rig_id = $1 AND seq = $2`, [rigId, seq]);
  return rows.length ? toRow(rows[0]) : null;
}

export async function latestChamberSample(m: EntityManager, rigId: string): Promise<ChamberRow | null> {
  const rows: ChamberRow[] = await m.query(`SELECT ${COLUMNS} FROM chamber_samples WHERE rig_id = $1 ORDER BY seq DESC LIMIT 1`, [rigId]);
  return rows.length ? toRow(rows[0]) : null;
}

/** The chamber's recent profile for the run page: air and load by the chamber's clock (at most `limit` rows, newest last). */
export async function recentChamberSamples(m: EntityManager, rigId: string, limit: number): Promise<ChamberRow[]> {
  const rows: ChamberRow[] = await m.query(
    `SELECT * FROM (SELECT ${COLUMNS} FROM chamber_samples WHERE rig_id = $1 ORDER BY seq DESC LIMIT $2) x ORDER BY seq`,
    [rigId, limit],
  );
  return rows.map(toRow);
}

export async function maxChamberSeq(m: EntityManager, rigId: string): Promise<number> {
  const rows: Array<{ s: string | null }> = await m.query(`SELECT max(seq)::text AS s FROM chamber_samples WHERE rig_id = $1`, [rigId]);
  return rows[0]?.s ? Number(rows[0].s) : 0;
}

/**
 * The run's credit from its chamber, in one statement group: the run's hours, cycles, position in
 * the reports and counter; every device loaded gets the run's hours and cycles (unbiased: all sit in
 * the same air), and the smallest load swing of the counted cycles (Coffin–Manson's ΔT).
 */
export async function storeChamberCredit(
  m: EntityManager,
  runId: string,
  c: { hours: number; cycles: number; seq: number; clockS: number | null; counter: TcCounterState | null; minSwingK: number | null },
): Promise<void> {
  await m.query(
    `UPDATE runs SET stress_hours = $2, cycles_done = $3, accrued_to_seq = $4, accrued_to_clock_s = $5, chamber_counter = $6 WHERE id = $1`,
    [runId, c.hours, c.cycles, c.seq, c.clockS, c.counter === null ? null : JSON.stringify(c.counter)],
  );
  await m.query(
    `UPDATE run_sockets SET accrued_hours = $2, cycles_done = $3, last_d_tj_low_c = $4, last_d_tj_high_c = $4 WHERE run_id = $1`,
    [runId, c.hours, c.cycles, c.minSwingK],
  );
}

/** The run a chamber is stressing (for the excursion alarm). */
export async function stressingRunOfChamber(m: EntityManager, rigId: string): Promise<{ id: string; code: string; planId: string } | null> {
  const rows = await m.query(
    `SELECT r.id, r.code, r.plan_id AS "planId"
       FROM runs r JOIN stress_plans p ON p.id = r.plan_id
      WHERE r.rig_id = $1 AND r.state = 'stressing' ORDER BY r.started_at LIMIT 1`,
    [rigId],
  );
  return rows[0] ?? null;
}
