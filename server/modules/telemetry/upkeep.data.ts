/** The telemetry upkeep's SQL (upkeep.ts): day partitions, kept windows, the hourly tier. */
import type { Pool, PoolClient } from 'pg';

/** pg_advisory_xact_lock key of the upkeep ('EMBU' in ASCII): one run at a time per database. */
const UPKEEP_LOCK = 0x454d4255;

/** One step of the upkeep in a transaction of its own, holding the upkeep's lock. */
export async function inTransaction<T>(pool: Pool, work: (c: PoolClient) => Promise<T>): Promise<T> {
  const c = await pool.connect();
  try {
    await c.query('BEGIN');
    // A drop waits for the ingest's transactions in flight on the table; it must not queue them for long.
    await c.query(`SET LOCAL lock_timeout = '10s'`);
    await c.query('SELECT pg_advisory_xact_lock($1)', [UPKEEP_LOCK]);
    const out = await work(c);
    await c.query('COMMIT');
    return out;
  } catch (err) {
    await c.query('ROLLBACK').catch(() => undefined);
    throw err;
  } finally {
    c.release();
  }
}

export type DayPartitioned = 'telemetry_batches' | 'telemetry_rollups';

/** Hours of the hourly tier rebuilt by the upkeep are those touched by messages stored since this watermark (ms). */
export const HOURLY_WATERMARK = 'hourly_rolled_at_ms';

const dayOf = (name: string): string | null => {
  const m = /_p(\d{4})(\d{2})(\d{2})$/.exec(name);
  return m ? `${m[1]}-${m[2]}-${m[3]}` : null;
};

/** The day partitions of a table (UTC day as YYYY-MM-DD, ascending); the default partition is not listed. */
export async function dayPartitions(c: PoolClient, parent: DayPartitioned): Promise<Array<{ name: string; day: string }>> {
  const { rows } = await c.query<{ name: string }>(
    `SELECT k.relname AS name FROM pg_inherits i JOIN pg_class k ON k.oid = i.inhrelid WHERE i.inhparent = $1::regclass ORDER BY 1`,
    [parent],
  );
  return rows.flatMap((r) => {
    const day = dayOf(r.name);
    return day ? [{ name: r.name, day }] : [];
  });
}

/** Create the day partitions of [first, last] (YYYY-MM-DD) that do not exist; returns those created. */
export async function ensureDays(c: PoolClient, parent: DayPartitioned, first: string, last: string): Promise<string[]> {
  const before = new Set((await dayPartitions(c, parent)).map((p) => p.name));
  const { rows } = await c.query<{ name: string }>(
    `SELECT telemetry_day_partition($1, d::date) AS name FROM generate_series($2::date, $3::date, interval '1 day') d`,
    [parent, first, last],
  );
  return rows.map((r) => r.name).filter((n) => !before.has(n));
}

/** Days that have rows in the default partition (a day whose partition did not exist when they came). */
export async function defaultDays(c: PoolClient, parent: DayPartitioned): Promise<string[]> {
  const col = parent === 'telemetry_batches' ? 'ts' : 'minute';
  const { rows } = await c.query<{ day: string }>(
    `SELECT DISTINCT to_char((${col} AT TIME ZONE 'UTC')::date, 'YYYY-MM-DD') AS day FROM ${parent}_default ORDER BY 1`,
  );
  return rows.map((r) => r.day);
}

/**
 * Copy into telemetry_kept the raw messages of a day partition within `aroundMin` minutes of a
 * trip or any other alarm on the rig, or of a read point of a run on the rig. Returns rows copied.
 */
export async function keepWindows(c: PoolClient, partition: string, day: string, aroundMin: number): Promise<number> {
  const res = await c.query(
    `WITH bounds AS (
       SELECT ($1::date::timestamp AT TIME ZONE 'UTC') - make_interval(mins => $2) AS lo,
              (($1::date + 1)::timestamp AT TIME ZONE 'UTC') + make_interval(mins => $2) AS hi
     ), events AS (
       SELECT a.rig_id, a.raised_at AS at FROM alarms a, bounds
       WHERE a.rig_id IS NOT NULL AND a.raised_at >= bounds.lo AND a.raised_at < bounds.hi
       UNION
       SELECT r.rig_id, l.at FROM audit_log l JOIN runs r ON l.entity = 'run' AND l.entity_id = r.id::text, bounds
       WHERE l.action = 'run.read-point' AND l.at >= bounds.lo AND l.at < bounds.hi
     )
     INSERT INTO telemetry_kept
     SELECT p.* FROM events e
     JOIN ${quoteIdent(partition)} p ON p.rig_id = e.rig_id AND p.ts >= e.at - make_interval(mins => $2) AND p.ts <= e.at + make_interval(mins => $2)
     ON CONFLICT DO NOTHING`,
    [day, aroundMin],
  );
  return res.rowCount ?? 0;
}

/** Rebuild the hourly rollups of one UTC day from a minute partition (before that partition is dropped). */
export async function hourlyFromMinutePartition(c: PoolClient, partition: string, day: string): Promise<number> {
  await c.query(
    `DELETE FROM telemetry_hourly WHERE hour >= ($1::date::timestamp AT TIME ZONE 'UTC') AND hour < (($1::date + 1)::timestamp AT TIME ZONE 'UTC')`,
    [day],
  );
  const res = await c.query(
    `INSERT INTO telemetry_hourly (rig_id, socket, hour, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
     SELECT rig_id, socket, date_trunc('hour', minute AT TIME ZONE 'UTC') AT TIME ZONE 'UTC', sum(n), sum(sum_c), min(min_c), max(max_c), sum(sum_ia), max(stress_clock_s)
     FROM ${quoteIdent(partition)} GROUP BY 1, 2, 3`,
  );
  return res.rowCount ?? 0;
}

/**
 * Rebuild, from the minute rollups, every (rig, hour) touched by a message stored since `sinceMs`
 * whose hour starts at or after `oldestHour` (older hours no longer have all their minutes), then
 * move the watermark to this transaction's start. Returns the rows written.
 */
export async function rebuildTouchedHours(c: PoolClient, sinceMs: number, oldestHour: Date): Promise<number> {
  await c.query(
    `CREATE TEMP TABLE hourly_touched ON COMMIT DROP AS
     SELECT DISTINCT rig_id, date_trunc('hour', ts AT TIME ZONE 'UTC') AT TIME ZONE 'UTC' AS hour
     FROM telemetry_batches WHERE stored_at >= $1 AND ts >= $2`,
    [new Date(sinceMs), oldestHour],
  );
  await c.query(`DELETE FROM telemetry_hourly h USING hourly_touched t WHERE h.rig_id = t.rig_id AND h.hour = t.hour`);
  const res = await c.query(
    `INSERT INTO telemetry_hourly (rig_id, socket, hour, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
     SELECT u.rig_id, u.socket, t.hour, sum(u.n), sum(u.sum_c), min(u.min_c), max(u.max_c), sum(u.sum_ia), max(u.stress_clock_s)
     FROM hourly_touched t JOIN telemetry_rollups u ON u.rig_id = t.rig_id AND u.minute >= t.hour AND u.minute < t.hour + interval '1 hour'
     GROUP BY u.rig_id, u.socket, t.hour`,
  );
  await c.query(
    `INSERT INTO system_counters AS c (name, value, updated_at) VALUES ($1, (extract(epoch FROM now()) * 1000)::bigint, now())
     ON CONFLICT (name) DO UPDATE SET value = GREATEST(c.value, EXCLUDED.value), updated_at = now()`,
    [HOURLY_WATERMARK],
  );
  return res.rowCount ?? 0;
}

/** The hourly watermark (ms), or null when there is none. */
export async function hourlyWatermark(c: PoolClient): Promise<number | null> {
  const { rows } = await c.query<{ value: string }>('SELECT value FROM system_counters WHERE name = $1', [HOURLY_WATERMARK]);
  return rows.length ? Number(rows[0].value) : null;
}

export async function dropPartition(c: PoolClient, partition: string): Promise<void> {
  await c.query(`DROP TABLE ${quoteIdent(partition)}`);
}

/** Partition names come from pg_class and match /^telemetry_\w+_p\d{8}$/; quoted all the same. */
function quoteIdent(name: string): string {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`unexpected partition name ${JSON.stringify(name)}`);
  return `"${name}"`;
}
