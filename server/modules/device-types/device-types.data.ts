/** The device-types module's raw SQL, apart from the rules in device-types.service.ts. */
import type { EntityManager } from 'typeorm';

/** Per device type: its lots, the devices in them and its current plans. */
export function deviceTypeUsage(
  m: EntityManager,
  ids: string[],
): Promise<Array<{ id: string; lots: number; devices: number; plans: number }>> {
  return m.query(
    `SELECT dt.id,
            (SELECT count(*)::int FROM lots l WHERE l.device_type_id = dt.id) AS lots,
            (SELECT count(*)::int FROM devices d JOIN lots l ON l.id = d.lot_id WHERE l.device_type_id = dt.id) AS devices,
            (SELECT count(*)::int FROM stress_plans p WHERE p.device_type_id = dt.id AND p.current) AS plans
       FROM device_types dt WHERE dt.id = ANY($1::uuid[])`,
    [ids],
  );
}
