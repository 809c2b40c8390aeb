import type { EntityManager } from 'typeorm';

/** Devices of the lot never placed in any run: the fresh devices a make-up can draw from. */
export async function freshDevicesInLot(m: EntityManager, lotId: string): Promise<number> {
  const rows: Array<{ n: number }> = await m.query(
    `SELECT count(*)::int AS n FROM devices d
      WHERE d.lot_id = $1 AND NOT EXISTS (SELECT 1 FROM run_sockets s WHERE s.device_id = d.id)`,
    [lotId],
  );
  return rows[0]?.n ?? 0;
}
