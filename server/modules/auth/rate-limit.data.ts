/**
 * The sign-in limiter's counters in PostgreSQL (`rate_limit_hits`, migration 1835…), so every API
 * process behind a balancer counts the same attempts (EMBERLOT_WORKERS=elect; the single-process
 * default keeps express-rate-limit's memory store). One statement per hit: a window that has run
 * out starts again at 1.
 */
import type { Pool } from 'pg';
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';

export class PgRateLimitStore implements Store {
  readonly localKeys = false;
  readonly prefix = 'sign-in:';
  private windowMs = 15 * 60_000;

  constructor(private readonly pool: () => Pool) {}

  init(options: Options): void {
    this.windowMs = options.windowMs;
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const r = await this.pool().query<{ hits: number; reset_at: Date }>(
      `INSERT INTO rate_limit_hits (key, hits, reset_at) VALUES ($1, 1, now() + $2 * interval '1 millisecond')
       ON CONFLICT (key) DO UPDATE SET
         hits = CASE WHEN rate_limit_hits.reset_at <= now() THEN 1 ELSE rate_limit_hits.hits + 1 END,
         reset_at = CASE WHEN rate_limit_hits.reset_at <= now() THEN EXCLUDED.reset_at ELSE rate_limit_hits.reset_at END
       RETURNING hits, reset_at`,
      [this.prefix + key, this.windowMs],
    );
    return { totalHits: r.rows[0].hits, resetTime: r.rows[0].reset_at };
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const r = await this.pool().query<{ hits: number; reset_at: Date }>(
      `SELECT hits, reset_at FROM rate_limit_hits WHERE key = $1 AND reset_at > now()`,
      [this.prefix + key],
    );
    return r.rows[0] ? { totalHits: r.rows[0].hits, resetTime: r.rows[0].reset_at } : undefined;
  }

  async decrement(key: string): Promise<void> {
    await this.pool().query(`UPDATE rate_limit_hits SET hits = greatest(hits - 1, 0) WHERE key = $1`, [this.prefix + key]);
  }

  async resetKey(key: string): Promise<void> {
    await this.pool().query(`DELETE FROM rate_limit_hits WHERE key = $1`, [this.prefix + key]);
  }
}

/** Windows that ran out (the limiter restarts them itself; this only keeps the table small). */
export async function pruneRateLimits(pool: Pool): Promise<number> {
  const r = await pool.query(`DELETE FROM rate_limit_hits WHERE reset_at < now() - interval '1 hour'`);
  return r.rowCount ?? 0;
}
