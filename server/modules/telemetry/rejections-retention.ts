/**
 * rejected_messages is bounded: a rig that keeps sending something refused (it re-sends whatever
 * was not confirmed `stored`) or a flood of bad messages would otherwise grow it without end.
 * A job in the telemetry feature deletes rows older than REJECTED_KEEP_DAYS and, beyond that, all
 * but the newest REJECTED_KEEP_ROWS. The durable counter `ingest_rejected` keeps counting every
 * refusal, so nothing is hidden: the rows are the recent examples with their reasons.
 */
import type { Pool } from 'pg';

/** Rows older than this are deleted. */
export const REJECTED_KEEP_DAYS = 30;
/** At most this many rows are kept (the newest). */
export const REJECTED_KEEP_ROWS = 100_000;
/** How often the telemetry feature prunes. */
export const REJECTED_PRUNE_EVERY_MS = 60_000;

export interface RejectionRetention {
  keepDays?: number;
  keepRows?: number;
}

/** Delete what the retention allows; returns how many rows went. */
export async function pruneRejectedMessages(pool: Pick<Pool, 'query'>, opts: RejectionRetention = {}): Promise<number> {
  const keepDays = opts.keepDays ?? REJECTED_KEEP_DAYS;
  const keepRows = opts.keepRows ?? REJECTED_KEEP_ROWS;
  const byAge = await pool.query(`DELETE FROM rejected_messages WHERE at < now() - make_interval(days => $1::int)`, [keepDays]);
  // ids grow with arrival: the row keepRows from the newest is the cut (an index scan from the end).
  const byCount = await pool.query(
    `DELETE FROM rejected_messages
     WHERE id <= (SELECT id FROM rejected_messages ORDER BY id DESC OFFSET $1 LIMIT 1)`,
    [keepRows],
  );
  return (byAge.rowCount ?? 0) + (byCount.rowCount ?? 0);
}
