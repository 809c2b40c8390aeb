/** The device history's SQL: the device with its lot, its sockets on runs, alarms and dispositions. */
import type { EntityManager } from 'typeorm';

export interface DeviceLotRow {
  device_id: string;
  serial: string;
  lot_id: string;
  lot_code: string;
  date_code: string;
  wafer_lot: string;
  assembly_lot: string;
  die_revision: string;
  device_type_id: string;
  part_number: string;
}

export function deviceWithLot(m: EntityManager, deviceId: string): Promise<DeviceLotRow[]> {
  return m.query(
    `SELECT d.id AS device_id, d.serial, l.id AS lot_id, l.code AS lot_code, l.date_code, l.wafer_lot, l.assembly_lot, l.die_revision,
            dt.id AS device_type_id, dt.part_number
       FROM devices d JOIN lots l ON l.id = d.lot_id JOIN device_types dt ON dt.id = l.device_type_id
      WHERE d.id = $1`,
    [deviceId],
  );
}

export interface DeviceSocketRow {
  run_id: string;
  run_code: string;
  state: string;
  plan_name: string;
  plan_kind: string;
  rig_code: string | null;
  socket_index: number;
  started_at: Date | null;
  finished_at: Date | null;
  accrued_hours: number;
  tripped: boolean;
  tripped_at: Date | null;
  trip_reason: string | null;
  failed_at_h: number | null;
}

/** Every socket the device sat in, in the order its runs started. */
export function deviceSockets(m: EntityManager, deviceId: string): Promise<DeviceSocketRow[]> {
  return m.query(
    `SELECT r.id AS run_id, r.code AS run_code, r.state, p.name AS plan_name, p.kind AS plan_kind, g.code AS rig_code, s.socket_index,
            r.started_at, r.finished_at, s.accrued_hours, s.tripped, s.tripped_at, s.trip_reason, s.failed_at_h
       FROM run_sockets s JOIN runs r ON r.id = s.run_id JOIN stress_plans p ON p.id = r.plan_id LEFT JOIN rigs g ON g.id = r.rig_id
      WHERE s.device_id = $1 ORDER BY r.started_at NULLS LAST, r.created_at`,
    [deviceId],
  );
}

export interface DeviceAlarmRow {
  run_code: string;
  kind: string;
  severity: string;
  title: string;
  message: string;
  raised_at: Date;
  acknowledged_at: Date | null;
  cleared_at: Date | null;
}

/** Alarms raised on the device's socket during its runs. */
export function deviceAlarms(m: EntityManager, deviceId: string): Promise<DeviceAlarmRow[]> {
  return m.query(
    `SELECT r.code AS run_code, a.kind, a.severity, a.title, a.message, a.raised_at, a.acknowledged_at, a.cleared_at
       FROM run_sockets s JOIN runs r ON r.id = s.run_id
       JOIN alarms a ON a.run_id = s.run_id AND a.socket_index = s.socket_index
      WHERE s.device_id = $1 ORDER BY a.raised_at`,
    [deviceId],
  );
}

export interface DeviceDispositionRow {
  run_code: string;
  read_point_h: number;
  kind: string;
  reason: string;
  by_name: string;
  at: Date;
}

export function deviceDispositions(m: EntityManager, deviceId: string): Promise<DeviceDispositionRow[]> {
  return m.query(
    `SELECT r.code AS run_code, x.read_point_h, x.kind, x.reason, x.by_name, x.at
       FROM device_dispositions x JOIN runs r ON r.id = x.run_id WHERE x.device_id = $1 ORDER BY x.at`,
    [deviceId],
  );
}
