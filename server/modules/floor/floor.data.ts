/** The floor module's reads that are not the floor statement itself (that one: floor.service.ts). */
import type { DataSource } from 'typeorm';

/** Of these session ids, the ones that still exist, have not expired and belong to an active user. */
export async function liveSessionIds(ds: DataSource, sids: string[]): Promise<Set<string>> {
  const rows: Array<{ sid: string }> = await ds.query(
    `SELECT s.sid FROM "session" s
     JOIN users u ON u.id::text = s.sess->'passport'->>'user' AND u.active
     WHERE s.sid = ANY($1::varchar[]) AND s.expire > now()`,
    [sids],
  );
  return new Set(rows.map((r) => r.sid));
}
