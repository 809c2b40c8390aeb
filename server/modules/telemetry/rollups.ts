/**
 * Per-minute rollups of telemetry (telemetry_rollups: per rig, socket and UTC minute of the rig's
 * timestamp — count, Σ and extremes of the case temperature, Σ current, latest stress clock; socket
 * −1 is the chamber). Long chart spans read these instead of millions of samples.
 *
 * The ingest no longer upserts them in every batch: with many rigs that upsert (rigs × sockets rows
 * per transaction, whatever the batch size) cost about a third of the ingest's throughput. It folds
 * each committed batch into memory (RollupAccumulator) and writes what it holds every few seconds,
 * in an ordinary ingest transaction that also records the time of that write (the watermark,
 * system_counters.rollups_flushed_at_ms). The upsert adds, so a minute written in several pieces
 * (late re-sends, a flush in the middle of a minute) sums correctly.
 *
 * A crash loses what was folded but not yet written. On start, before taking any message,
 * recoverRollups rebuilds — entirely from the stored samples, so exactly — every (rig, minute)
 * touched by a batch stored since the watermark (less a margin for transactions in flight at the
 * flush). Charts of the open minute may lag by up to the flush interval.
 */
import type { PoolClient, Pool } from 'pg';
import type { TelemetryLanded } from './contracts';

const MINUTE_MS = 60_000;
export const ROLLUP_WATERMARK = 'rollups_flushed_at_ms';
/** Batches stored this long before the watermark are rebuilt too (a transaction in flight at the flush). */
export const RECOVERY_MARGIN_MS = 120_000;

export interface RollupRow {
  rigId: string;
  socket: number;
  /** Minute start, ms since the epoch (UTC). */
  minute: number;
  n: number;
  sum: number;
  min: number;
  max: number;
  sumIA: number;
  clock: number;
}

function add(r: RollupRow, c: number, iA: number, clock: number): void {
  r.n++;
  r.sum += c;
  if (c < r.min) r.min = c;
  if (c > r.max) r.max = c;
  r.sumIA += iA;
  if (clock > r.clock) r.clock = clock;
}

function merge(into: RollupRow, r: RollupRow): void {
  into.n += r.n;
  into.sum += r.sum;
  if (r.min < into.min) into.min = r.min;
  if (r.max > into.max) into.max = r.max;
  into.sumIA += r.sumIA;
  if (r.clock > into.clock) into.clock = r.clock;
}

const fresh = (rigId: string, socket: number, minute: number, c: number, iA: number, clock: number): RollupRow => ({
  rigId,
  socket,
  minute,
  n: 1,
  sum: c,
  min: c,
  max: c,
  sumIA: iA,
  clock,
});

/** Rollups folded in memory and not yet written. */
export class RollupAccumulator {
  /** `${rigId}|${minute}` → socket (−1 = chamber) → row. */
  private groups = new Map<string, Map<number, RollupRow>>();
  private rows = 0;

  get pendingRows(): number {
    return this.rows;
  }

  /** Fold committed messages (each exactly once: the caller passes only newly stored ones). */
  add(messages: Iterable<Pick<TelemetryLanded, 'rigId' | 'ts' | 'stressClockS' | 'chamberC' | 'socket' | 'caseC' | 'iA'>>): void {
    for (const m of messages) {
      const minute = Math.floor(m.ts.getTime() / MINUTE_MS) * MINUTE_MS;
      const key = `${m.rigId}|${minute}`;
      let g = this.groups.get(key);
      if (!g) this.groups.set(key, (g = new Map()));
      const clock = m.stressClockS;
      const ch = g.get(-1);
      if (ch) add(ch, m.chamberC, 0, clock);
      else {
        g.set(-1, fresh(m.rigId, -1, minute, m.chamberC, 0, clock));
        this.rows++;
      }
      const { socket, caseC, iA } = m;
      for (let k = 0; k < socket.length; k++) {
        const r = g.get(socket[k]);
        if (r) add(r, caseC[k], iA[k], clock);
        else {
          g.set(socket[k], fresh(m.rigId, socket[k], minute, caseC[k], iA[k], clock));
          this.rows++;
        }
      }
    }
  }

  /** Everything held, sorted (a fixed lock order); the accumulator is left empty. */
  take(): RollupRow[] {
    const out: RollupRow[] = [];
    for (const g of this.groups.values()) for (const r of g.values()) out.push(r);
    this.groups = new Map();
    this.rows = 0;
    return out.sort((x, y) => (x.rigId < y.rigId ? -1 : x.rigId > y.rigId ? 1 : x.socket - y.socket || x.minute - y.minute));
  }

  /** Rows whose write failed come back (merged with anything folded since). */
  putBack(rows: RollupRow[]): void {
    for (const r of rows) {
      const key = `${r.rigId}|${r.minute}`;
      let g = this.groups.get(key);
      if (!g) this.groups.set(key, (g = new Map()));
      const have = g.get(r.socket);
      if (have) merge(have, r);
      else {
        g.set(r.socket, { ...r });
        this.rows++;
      }
    }
  }
}

/** Add rows to telemetry_rollups and record the time of this write. Call inside a transaction. */
export async function upsertRollups(client: PoolClient, rows: RollupRow[]): Promise<void> {
  if (rows.length) {
    await client.query(
      `INSERT INTO telemetry_rollups AS r (rig_id, socket, minute, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
       SELECT * FROM unnest($1::uuid[], $2::smallint[], $3::timestamptz[], $4::int[], $5::float8[], $6::real[], $7::real[], $8::float8[], $9::float8[])
       ON CONFLICT (rig_id, socket, minute) DO UPDATE SET
         n = r.n + EXCLUDED.n,
         sum_c = r.sum_c + EXCLUDED.sum_c,
         min_c = LEAST(r.min_c, EXCLUDED.min_c),
         max_c = GREATEST(r.max_c, EXCLUDED.max_c),
         sum_ia = r.sum_ia + EXCLUDED.sum_ia,
         stress_clock_s = GREATEST(r.stress_clock_s, EXCLUDED.stress_clock_s)`,
      [
        rows.map((r) => r.rigId),
        rows.map((r) => r.socket),
        rows.map((r) => new Date(r.minute)),
        rows.map((r) => r.n),
        rows.map((r) => r.sum),
        rows.map((r) => r.min),
        rows.map((r) => r.max),
        rows.map((r) => r.sumIA),
        rows.map((r) => r.clock),
      ],
    );
  }
  await setWatermark(client);
}

async function setWatermark(client: PoolClient | Pool): Promise<void> {
  await client.query(
    `INSERT INTO system_counters AS c (name, value, updated_at)
     VALUES ($1, (extract(epoch FROM now()) * 1000)::bigint, now())
     ON CONFLICT (name) DO UPDATE SET value = GREATEST(c.value, EXCLUDED.value), updated_at = now()`,
    [ROLLUP_WATERMARK],
  );
}

/**
 * Rebuild from the stored samples every (rig, minute) touched by a batch stored since the
 * watermark (less RECOVERY_MARGIN_MS), then move the watermark to now. Run before the ingest
 * takes messages. Without a watermark (a database written before rollups were deferred, or empty)
 * the rollups are complete: only the watermark is set. Returns the (rig, minute) pairs rebuilt.
 */
export async function recoverRollups(pool: Pool): Promise<number> {
  const client = await pool.connect();
  try {
    await client.query('BEGIN');
    const { rows } = await client.query<{ value: string }>('SELECT value FROM system_counters WHERE name = $1 FOR UPDATE', [
      ROLLUP_WATERMARK,
    ]);
    let rebuilt = 0;
    if (rows.length) {
      const since = new Date(Number(rows[0].value) - RECOVERY_MARGIN_MS);
      await client.query(
        `CREATE TEMP TABLE rollup_recovery ON COMMIT DROP AS
         SELECT DISTINCT rig_id, date_trunc('minute', ts AT TIME ZONE 'UTC') AT TIME ZONE 'UTC' AS minute
         FROM telemetry_batches WHERE stored_at >= $1`,
        [since],
      );
      const res = await client.query(
        `DELETE FROM telemetry_rollups r USING rollup_recovery m WHERE r.rig_id = m.rig_id AND r.minute = m.minute`,
      );
      void res;
      const ins = await client.query(
        `INSERT INTO telemetry_rollups (rig_id, socket, minute, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
         SELECT b.rig_id, -1, m.minute, count(*), sum(b.chamber_c), min(b.chamber_c), max(b.chamber_c), 0, max(b.stress_clock_s)
         FROM rollup_recovery m
         JOIN telemetry_batches b ON b.rig_id = m.rig_id AND b.ts >= m.minute AND b.ts < m.minute + interval '1 minute'
         GROUP BY b.rig_id, m.minute
         UNION ALL
         SELECT b.rig_id, s.socket, m.minute, count(*), sum(s.case_c), min(s.case_c), max(s.case_c), sum(s.i_a), max(b.stress_clock_s)
         FROM rollup_recovery m
         JOIN telemetry_batches b ON b.rig_id = m.rig_id AND b.ts >= m.minute AND b.ts < m.minute + interval '1 minute'
         CROSS JOIN LATERAL unnest(b.socket, b.case_c, b.i_a) AS s(socket, case_c, i_a)
         GROUP BY b.rig_id, s.socket, m.minute`,
      );
      rebuilt = ins.rowCount ?? 0;
    }
    await setWatermark(client);
    await client.query('COMMIT');
    return rebuilt;
  } catch (err) {
    await client.query('ROLLBACK').catch(() => undefined);
    throw err;
  } finally {
    client.release();
  }
}
