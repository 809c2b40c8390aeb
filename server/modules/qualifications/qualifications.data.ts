/** The qualifications module's SQL: the runs on a qualification's lots, with their plan kind and rig. */
import type { EntityManager } from 'typeorm';

export interface QualRunRow {
  id: string;
  code: string;
  state: string;
  stress_hours: number;
  lot_id: string;
  kind: string;
  plan_name: string;
  rig_code: string | null;
  rig_id: string | null;
  rig_name: string | null;
  calibration_due_at: Date | null;
  interlock_tested_at: Date | null;
  created_at: Date;
}

/** Every run on any of `lotIds` (a run across several lots appears once per lot), oldest first. */
export function runsOnLots(m: EntityManager, lotIds: readonly string[]): Promise<QualRunRow[]> {
  if (!lotIds.length) return Promise.resolve([]);
  return m.query(
    `SELECT r.id, r.code, r.state, r.stress_hours, rl.lot_id, p.kind, p.name AS plan_name,
            rg.code AS rig_code, rg.id AS rig_id, rg.name AS rig_name,
            rg.calibration_due_at, rg.interlock_tested_at, r.created_at
       FROM runs r
       JOIN run_lots rl ON rl.run_id = r.id
       JOIN stress_plans p ON p.id = r.plan_id
       LEFT JOIN rigs rg ON rg.id = r.rig_id
      WHERE rl.lot_id = ANY($1::uuid[])
      ORDER BY r.created_at, r.code`,
    [lotIds],
  );
}

/** Highest qualification code number with the given prefix (codes are PREFIX-NNN). */
export async function lastCodeNumber(m: EntityManager, prefix: string): Promise<number> {
  const rows: Array<{ n: number | null }> = await m.query(
    `SELECT max(substring(code FROM '[0-9]+$')::int) AS n FROM qualifications WHERE code LIKE $1`,
    [`${prefix}-%`],
  );
  return rows[0]?.n ?? 0;
}
