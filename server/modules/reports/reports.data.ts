/** The reports module's SQL: a lot's dispositions, trips and the equipment its runs used. */
import type { EntityManager } from 'typeorm';

export interface DispositionRow {
  run_id: string;
  run_code: string;
  device_id: string;
  serial: string;
  read_point_h: number;
  kind: string;
  reason: string;
  by_name: string;
  at: Date;
}

/** Every disposition recorded for a device of the lot, oldest first. */
export function lotDispositions(m: EntityManager, lotId: string): Promise<DispositionRow[]> {
  return m.query(
    `SELECT x.run_id, r.code AS run_code, x.device_id, d.serial, x.read_point_h, x.kind, x.reason, x.by_name, x.at
       FROM device_dispositions x JOIN devices d ON d.id = x.device_id JOIN runs r ON r.id = x.run_id
      WHERE d.lot_id = $1 ORDER BY x.at, d.serial`,
    [lotId],
  );
}

export interface TripRow {
  run_code: string;
  rig_code: string | null;
  socket_index: number;
  serial: string;
  tripped_at: Date | null;
  trip_reason: string | null;
}

/** The lot's sockets that tripped (run_sockets keeps the latest trip of each). */
export function lotTrips(m: EntityManager, lotId: string): Promise<TripRow[]> {
  return m.query(
    `SELECT r.code AS run_code, g.code AS rig_code, s.socket_index, d.serial, s.tripped_at, s.trip_reason
       FROM run_sockets s JOIN devices d ON d.id = s.device_id JOIN runs r ON r.id = s.run_id LEFT JOIN rigs g ON g.id = r.rig_id
      WHERE d.lot_id = $1 AND s.tripped ORDER BY s.tripped_at NULLS LAST, d.serial`,
    [lotId],
  );
}

export interface EquipmentRow {
  run_id: string;
  run_code: string;
  state: string;
  started_at: Date | null;
  finished_at: Date | null;
  rig_code: string | null;
  rig_name: string | null;
  sockets: number[];
  calibration_done_at: Date | null;
  calibration_due_at: Date | null;
  interlock_tested_at: Date | null;
}

/**
 * The runs that held the lot's devices, their rig and sockets, and the rig's latest calibration and
 * interlock-test records on or before the run's start (the records the start permit read).
 */
export function lotEquipment(m: EntityManager, lotId: string): Promise<EquipmentRow[]> {
  return m.query(
    `SELECT r.id AS run_id, r.code AS run_code, r.state, r.started_at, r.finished_at, g.code AS rig_code, g.name AS rig_name,
            (SELECT array_agg(s.socket_index ORDER BY s.socket_index) FROM run_sockets s JOIN devices d ON d.id = s.device_id
              WHERE s.run_id = r.id AND d.lot_id = $1) AS sockets,
            cal.done_at AS calibration_done_at, cal.due_at AS calibration_due_at, il.done_at AS interlock_tested_at
       FROM runs r JOIN run_lots rl ON rl.run_id = r.id AND rl.lot_id = $1
       LEFT JOIN rigs g ON g.id = r.rig_id
       LEFT JOIN LATERAL (SELECT done_at, due_at FROM rig_service_records x
                           WHERE x.rig_id = r.rig_id AND x.kind = 'calibration' AND x.done_at <= coalesce(r.started_at, now())
                           ORDER BY x.done_at DESC LIMIT 1) cal ON true
       LEFT JOIN LATERAL (SELECT done_at FROM rig_service_records x
                           WHERE x.rig_id = r.rig_id AND x.kind = 'interlock-test' AND x.done_at <= coalesce(r.started_at, now())
                           ORDER BY x.done_at DESC LIMIT 1) il ON true
      ORDER BY r.started_at NULLS LAST, r.code`,
    [lotId],
  );
}

export interface PlanConditionRow {
  id: string;
  name: string;
  version: number;
  kind: string;
  chamber_c: number;
  humidity_pct: number | null;
  duration_h: number;
  read_points_h: number[];
  sample_size: number;
  accept_number: number;
  criteria: { hfeChangePct: number; leakageMultiple: number; leakageFloorA: number; vcesatShiftV: number };
}

/** The stress conditions of the plans (by version id) a certificate names. */
export function planConditions(m: EntityManager, planIds: string[]): Promise<PlanConditionRow[]> {
  if (!planIds.length) return Promise.resolve([]);
  return m.query(
    `SELECT id, name, version, kind, chamber_c, humidity_pct, duration_h, read_points_h, sample_size, accept_number, criteria
       FROM stress_plans WHERE id = ANY($1) ORDER BY name`,
    [planIds],
  );
}
