/**
 * The telemetry module's SQL outside the ingest's hot path (the ingest transaction lives in
 * ingest-store.ts, rollups in rollups.ts; both take the pg pool directly for their cost).
 */
import type { DataSource } from 'typeorm';

/** Marks offline every online rig not heard from since `quietSince`; the rigs it changed. */
export async function markQuietRigsOffline(ds: DataSource, quietSince: Date): Promise<Array<{ id: string; code: string }>> {
  // TypeORM answers an UPDATE … RETURNING with [rows, affectedCount], a SELECT with rows.
  const result: unknown = await ds.query(
    `UPDATE rigs SET online = false
     WHERE online AND (last_seen_at IS NULL OR last_seen_at < $1)
     RETURNING id, code`,
    [quietSince],
  );
  const rows: unknown = Array.isArray(result) && Array.isArray(result[0]) ? result[0] : result;
  return Array.isArray(rows) ? rows : [];
}

export interface RejectionRow {
  id: string;
  at: Date;
  topic: string;
  rig_code: string | null;
  reason: string;
  excerpt: string;
}

/** The newest refused messages, optionally of one rig. */
export function recentRejections(ds: DataSource, limit: number, rigCode: string | null): Promise<RejectionRow[]> {
  return ds.query(
    `SELECT id, at, topic, rig_code, reason, excerpt FROM rejected_messages
     WHERE ($1::varchar IS NULL OR rig_code = $1) ORDER BY id DESC LIMIT $2`,
    [rigCode, limit],
  );
}

export function systemCounters(ds: DataSource): Promise<Array<{ name: string; value: string }>> {
  return ds.query(`SELECT name, value FROM system_counters ORDER BY name`);
}
