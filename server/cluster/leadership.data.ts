/** The leadership lock's statements (leadership.ts), all on the leader's own session connection. */
import type { Client, Pool } from 'pg';
import type { DataSource } from 'typeorm';

/**
 * pg_advisory_lock key of the workers' leadership: 'EMBRLEAD' in ASCII. Session-level: PostgreSQL
 * releases it when the holding connection ends (the process was killed, the network dropped).
 */
export const LEADER_LOCK_KEY = '4993720483058106692';

export async function tryLeaderLock(c: Client): Promise<boolean> {
  const r = await c.query<{ ok: boolean }>('SELECT pg_try_advisory_lock($1::bigint) AS ok', [LEADER_LOCK_KEY]);
  return r.rows[0]?.ok === true;
}

/** The leader names itself (cluster_leader, one row) for /api/health; the lock stays the truth. */
export async function writeLeaderRow(c: Client, who: { holder: string; host: string; pid: number }): Promise<Date> {
  const r = await c.query<{ since: Date }>(
    `INSERT INTO cluster_leader (id, holder, host, pid, since, heartbeat_at) VALUES (1, $1, $2, $3, now(), now())
     ON CONFLICT (id) DO UPDATE SET holder = EXCLUDED.holder, host = EXCLUDED.host, pid = EXCLUDED.pid, since = now(), heartbeat_at = now()
     RETURNING since`,
    [who.holder, who.host, who.pid],
  );
  return r.rows[0].since;
}

/** Heartbeat: proves the session (and so the lock) is alive. False when another process holds the row. */
export async function heartbeat(c: Client, holder: string): Promise<boolean> {
  const r = await c.query(`UPDATE cluster_leader SET heartbeat_at = now() WHERE id = 1 AND holder = $1`, [holder]);
  return (r.rowCount ?? 0) > 0;
}

export interface LeaderRow {
  holder: string;
  host: string;
  pid: number;
  since: Date;
  heartbeatAt: Date;
  /** Does a session hold the lock now? (pg_locks; false: the row is stale, no leader.) */
  lockHeld: boolean;
}

export async function readLeader(pool: Pool): Promise<LeaderRow | null> {
  const r = await pool.query<{ holder: string; host: string; pid: number; since: Date; heartbeat_at: Date; lock_held: boolean }>(
    `SELECT l.holder, l.host, l.pid, l.since, l.heartbeat_at,
            EXISTS (SELECT 1 FROM pg_locks k WHERE k.locktype = 'advisory' AND k.granted AND k.database = (SELECT oid FROM pg_database WHERE datname = current_database())
                    AND ((k.classid::bigint << 32) | k.objid::bigint) = $1::bigint) AS lock_held
     FROM cluster_leader l WHERE l.id = 1`,
    [LEADER_LOCK_KEY],
  );
  const x = r.rows[0];
  return x ? { holder: x.holder, host: x.host, pid: x.pid, since: x.since, heartbeatAt: x.heartbeat_at, lockHeld: x.lock_held } : null;
}

/** The event relay's NOTIFY channel (event-relay.ts). */
export const EVENTS_CHANNEL = 'emberlot_events';

export async function notifyEvents(pool: Pool, payload: string): Promise<void> {
  await pool.query('SELECT pg_notify($1, $2)', [EVENTS_CHANNEL, payload]);
}

/** pg_advisory_lock key around migrations when several API processes start at once: 'EMBRMIGR'. */
export const MIGRATION_LOCK_KEY = '4993720483075147602';

/**
 * Run the pending migrations while holding a session-level advisory lock on a connection of the
 * data source, so two API processes starting together never run the same migration twice (the
 * second waits, then finds nothing pending).
 */
export async function migrateUnderLock(ds: DataSource): Promise<void> {
  const qr = ds.createQueryRunner();
  await qr.connect();
  try {
    await qr.query('SELECT pg_advisory_lock($1::bigint)', [MIGRATION_LOCK_KEY]);
    try {
      await ds.runMigrations({ transaction: 'each' });
    } finally {
      await qr.query('SELECT pg_advisory_unlock($1::bigint)', [MIGRATION_LOCK_KEY]);
    }
  } finally {
    await qr.release();
  }
}
