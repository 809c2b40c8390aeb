/** The lots module's SQL: lot rows with their part number and registered device count. */
import type { DataSource, EntityManager } from 'typeorm';

/** A lot as read with its part number and device count (lots.service.ts maps it to a Lot). */
export interface LotRow {
  id: string;
  code: string;
  device_type_id: string;
  part_number: string;
  quantity: number;
  date_code: string;
  notes: string;
  wafer_lot: string;
  assembly_lot: string;
  die_revision: string;
  device_count: number;
  created_at: Date;
}

const LOT_SELECT = `
  SELECT l.id, l.code, l.device_type_id, dt.part_number, l.quantity, l.date_code, l.notes, l.wafer_lot, l.assembly_lot, l.die_revision, l.created_at,
         (SELECT count(*)::int FROM devices d WHERE d.lot_id = l.id) AS device_count
    FROM lots l JOIN device_types dt ON dt.id = l.device_type_id`;

/** Up to 500 lots, newest first, of one device type and/or whose code contains `q` (ILIKE, wildcards escaped). */
export function listLotRows(ds: DataSource, filter: { deviceTypeId?: string; q?: string }): Promise<LotRow[]> {
  const where: string[] = [];
  const params: unknown[] = [];
  if (filter.deviceTypeId) {
    params.push(filter.deviceTypeId);
    where.push(`l.device_type_id = $${params.length}`);
  }
  if (filter.q) {
    params.push(`%${filter.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`);
    where.push(`l.code ILIKE $${params.length}`);
  }
  return ds.query(
    `${LOT_SELECT} ${where.length ? `WHERE ${where.join(' AND ')}` : ''} ORDER BY l.created_at DESC, l.code LIMIT 500`,
    params,
  );
}

/** The lot with this id (no row when there is none); `m` may be a transaction's manager. */
export function lotRowsById(m: EntityManager, id: string): Promise<LotRow[]> {
  return m.query(`${LOT_SELECT} WHERE l.id = $1`, [id]);
}
