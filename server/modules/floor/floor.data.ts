/** The floor module's SQL: the floor statement (moved verbatim; see its comment), the socket board, the charts and the stream's session check. */
import type { DataSource } from 'typeorm';
import type { RunState } from '../../../shared/domain/run-states';
import type { TelemetryTier } from '../../../shared/domain/telemetry-tiers';

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

/** The floor statement's row: one per rig (floor.service.ts maps it to a tile). */
export interface TileRow {
  id: string;
  code: string;
  name: string;
  location: string;
  active: boolean;
  online: boolean;
  last_seen_at: Date | null;
  chamber_c: number | null;
  setpoint_c: number | null;
  humidity_pct: number | null;
  max_temp_c: number;
  socket_count: number;
  last_ts: Date | null;
  run_id: string | null;
  run_code: string | null;
  run_state: RunState | null;
  stress_hours: number | null;
  next_read_point: number | null;
  read_points_h: number[] | null;
  plan_kind: string | null;
  loaded: number;
  powered: number;
  tripped: number;
  max_case_c: number | null;
  open_alarms: number;
  kind: string;
  min_temp_c: number | null;
  max_pressure_k_pa: number | null;
  cycles_done: number | null;
  tc_phase: string | null;
  tc_target: number | null;
  cs_ts: Date | null;
  cs_air_c: number | null;
  cs_load_c: number | null;
  cs_setpoint_c: number | null;
  cs_humidity_pct: number | null;
  cs_pressure_k_pa: number | null;
  cs_door_open: boolean | null;
  excursion_alarms: number;
  thermal_flags: number[];
}

/**
 * One statement for every tile: the rig row, its active run (the newest per rig), the run's socket
 * map, the newest message's socket counts and the unacknowledged alarms. No per-socket work in
 * JavaScript. The run sockets are read once, for the active runs only: a FULL JOIN of the newest
 * samples with the run's sockets per rig (how the tripped count was once taken) can only be hashed
 * or merged, so PostgreSQL read run_sockets whole for every rig — every socket of every run the lab
 * ever ran (13.5 ms of a floor read for 49 rigs beside 7,800 run sockets; the floor's requests/s
 * halved as the bench's history grew). Tripped = sockets tripped in the newest message ∪ sockets
 * latched by the run, counted once: |T| + |L| − |T ∩ L|.
 */
const TILE_SQL = `
WITH active AS (
  SELECT DISTINCT ON (x.rig_id) x.rig_id, x.id, x.code, x.state, x.stress_hours, x.next_read_point, x.plan_id,
         x.cycles_done, x.chamber_counter->>'phase' AS tc_phase
  FROM runs x
  WHERE x.state = ANY($2::varchar[]) AND x.rig_id IS NOT NULL AND ($1::uuid[] IS NULL OR x.rig_id = ANY($1::uuid[]))
  ORDER BY x.rig_id, x.state_changed_at DESC
), run_map AS (
  SELECT k.run_id, count(*) AS loaded, COALESCE(array_agg(k.socket_index) FILTER (WHERE k.tripped), '{}') AS latched
  FROM run_sockets k JOIN active a ON a.id = k.run_id
  GROUP BY k.run_id
)
SELECT r.id, r.code, r.name, r.location, r.active, r.online, r.last_seen_at, r.chamber_c, r.setpoint_c,
       r.humidity_pct, r.max_temp_c, r.socket_count,
       b.ts AS last_ts,
       run.id AS run_id, run.code AS run_code, run.state AS run_state, run.stress_hours, run.next_read_point,
       p.read_points_h, p.kind AS plan_kind,
       COALESCE(rm.loaded, 0)::int AS loaded, COALESCE(ts.powered, 0)::int AS powered,
       (COALESCE(ts.tripped, 0) + COALESCE(cardinality(rm.latched), 0) - COALESCE(ts.tripped_latched, 0))::int AS tripped,
       ts.max_case_c,
       (SELECT count(*) FROM alarms a WHERE a.rig_id = r.id AND a.acknowledged_at IS NULL)::int AS open_alarms,
       r.kind, r.min_temp_c, r.max_pressure_k_pa, run.cycles_done, run.tc_phase, (p.thermal_cycle->>'cycles')::int AS tc_target,
       cs.ts AS cs_ts, cs.air_c AS cs_air_c, cs.load_c AS cs_load_c, cs.setpoint_c AS cs_setpoint_c,
       cs.humidity_pct AS cs_humidity_pct, cs.pressure_k_pa AS cs_pressure_k_pa, cs.door_open AS cs_door_open,
       (CASE WHEN r.kind = 'chamber' THEN (SELECT count(*) FROM alarms a WHERE a.rig_id = r.id AND a.acknowledged_at IS NULL
                                            AND a.kind = 'ambient-out-of-band') ELSE 0 END)::int AS excursion_alarms,
       (SELECT COALESCE(array_agg(DISTINCT a.socket_index), '{}') FROM alarms a
         WHERE a.rig_id = r.id AND a.kind = 'thermal-path' AND a.socket_index IS NOT NULL
           AND (a.acknowledged_at IS NULL OR a.cleared_at IS NULL))::int[] AS thermal_flags
FROM rigs r
LEFT JOIN telemetry_batches b ON b.rig_id = r.id AND b.seq = r.last_seq
LEFT JOIN active run ON run.rig_id = r.id
LEFT JOIN stress_plans p ON p.id = run.plan_id
LEFT JOIN run_map rm ON rm.run_id = run.id
LEFT JOIN LATERAL (
  SELECT count(*) FILTER (WHERE s.bias_on) AS powered, max(s.case_c) AS max_case_c,
         count(*) FILTER (WHERE s.tripped) AS tripped,
         count(*) FILTER (WHERE s.tripped AND s.socket = ANY(rm.latched)) AS tripped_latched
  FROM telemetry_samples s WHERE s.rig_id = r.id AND s.seq = r.last_seq
) ts ON true
LEFT JOIN LATERAL (
  -- A chamber's newest report (chamber_samples' key is (rig_id, seq)): boards never look.
  SELECT c.ts, c.air_c, c.load_c, c.setpoint_c, c.humidity_pct, c.pressure_k_pa, c.door_open
  FROM chamber_samples c WHERE r.kind = 'chamber' AND c.rig_id = r.id ORDER BY c.seq DESC LIMIT 1
) cs ON true
WHERE ($1::uuid[] IS NULL OR r.id = ANY($1::uuid[]))
ORDER BY r.active DESC, (r.kind = 'chamber'), r.code`;

/** Every rig's tile row, or only these rig ids; `states` are the on-rig run states. */
export function readTileRows(ds: DataSource, rigIds: string[] | null, states: readonly string[]): Promise<TileRow[]> {
  return ds.query(TILE_SQL, [rigIds, states]);
}

/** The id of the rig with this code (no row when there is none). */
export function rigIdRows(ds: DataSource, code: string): Promise<Array<{ id: string }>> {
  return ds.query('SELECT id FROM rigs WHERE code = $1', [code]);
}

export interface BoardRow {
  socket: number;
  case_c: number | null;
  v_v: number | null;
  i_a: number | null;
  bias_on: boolean | null;
  tripped: boolean | null;
  serial: string | null;
  run_tripped: boolean | null;
  trip_reason: string | null;
  last_seq: string;
  /** θjc of the loaded device's part (°C/W), for the junction estimate. */
  theta_jc: number | null;
}

/** One row per socket of the rig: the newest sample's values and the run's socket map. */
export function boardRows(ds: DataSource, rigId: string, runId: string | null): Promise<BoardRow[]> {
  return ds.query(
    `SELECT r.last_seq, g.socket, ts.case_c, ts.v_v, ts.i_a, ts.bias_on, ts.tripped, d.serial, rs.tripped AS run_tripped, rs.trip_reason,
            dt.theta_jc_c_per_w AS theta_jc
       FROM rigs r
       CROSS JOIN LATERAL generate_series(0, r.socket_count - 1) AS g(socket)
       LEFT JOIN telemetry_samples ts ON ts.rig_id = r.id AND ts.seq = r.last_seq AND ts.socket = g.socket
       LEFT JOIN run_sockets rs ON rs.run_id = $2 AND rs.socket_index = g.socket
       LEFT JOIN devices d ON d.id = rs.device_id
       LEFT JOIN lots l ON l.id = d.lot_id
       LEFT JOIN device_types dt ON dt.id = l.device_type_id
       WHERE r.id = $1
       ORDER BY g.socket`,
    [rigId, runId],
  );
}

/** The time of the rig's newest message (one row; ts null when it has none). */
export function newestBatchTs(ds: DataSource, rigId: string): Promise<Array<{ ts: Date | null }>> {
  return ds.query('SELECT b.ts FROM rigs r LEFT JOIN telemetry_batches b ON b.rig_id = r.id AND b.seq = r.last_seq WHERE r.id = $1', [
    rigId,
  ]);
}

/** Case temperature per socket in the rig's newest message (the fallback when no minute of the window is summarised yet). */
export function newestCaseTemps(ds: DataSource, rigId: string): Promise<Array<{ socket: number; mean_c: number | null }>> {
  return ds.query(
    `SELECT ts.socket, ts.case_c AS mean_c FROM rigs r JOIN telemetry_samples ts ON ts.rig_id = r.id AND ts.seq = r.last_seq
         WHERE r.id = $1`,
    [rigId],
  );
}

/** Mean case temperature per socket over the whole minutes of [from, to) from the per-minute rollups (socket −1, the chamber, left out). */
export function meanCaseTemps(
  ds: DataSource,
  rigId: string,
  from: Date,
  to: Date,
): Promise<Array<{ socket: number; mean_c: number | null }>> {
  return ds.query(
    `SELECT u.socket, sum(u.sum_c) / NULLIF(sum(u.n), 0) AS mean_c FROM telemetry_rollups u
         WHERE u.rig_id = $1 AND u.socket >= 0 AND u.minute >= date_trunc('minute', $2::timestamptz) AND u.minute < date_trunc('minute', $3::timestamptz)
         GROUP BY u.socket`,
    [rigId, from, to],
  );
}

export type ChartRow = { socket: number; k: number; avg: number; min: number; max: number };

/** Steps of read-point holds on a rig's runs between from and to (the audit trail): the chart marks them. */
export async function holdStepRows(
  ds: DataSource,
  rigId: string,
  from: Date,
  to: Date,
): Promise<Array<{ at: Date; action: string; to: string | null; code: string }>> {
  return ds.query(
    `SELECT a.at, a.action, a.details->>'to' AS "to", r.code FROM runs r
     JOIN audit_log a ON a.entity = 'run' AND a.entity_id = r.id::text
     WHERE r.rig_id = $1 AND a.action IN ('run.read-point', 'run.stress-complete', 'run.hold-phase') AND a.at >= $2 AND a.at <= $3
     ORDER BY a.at, a.id LIMIT 100`,
    [rigId, from, to],
  );
}

/**
 * A rig's chart rows, `points` buckets of `bucketMs` from `from`, from one tier (shared/domain/telemetry-tiers.ts):
 * raw messages (their socket arrays), per-minute or hourly rollups. Each bucket: avg / min / max.
 */
export async function chartRows(
  ds: DataSource,
  /** 'kept': the raw messages kept for good around trips, alarms and read points (telemetry_kept). */
  tier: TelemetryTier | 'kept',
  rigId: string,
  from: Date,
  to: Date,
  bucketMs: number,
  points: number,
  sockets: number[],
): Promise<ChartRow[]> {
  // k = bucket number 0…points-1; LEAST guards the last instant.
  const bucket = (col: string) => `LEAST(floor(extract(epoch FROM (${col} - $2::timestamptz)) * 1000 / $4)::int, $5 - 1)`;
  const params = [rigId, from, to, bucketMs, points, sockets];
  if (tier === 'raw' || tier === 'kept') {
    // The window's messages by (rig_id, ts) in the days' partitions it spans (or in telemetry_kept, same
    // columns, indexed by (rig_id, ts)); sockets from each message's arrays.
    const table = tier === 'kept' ? 'telemetry_kept' : 'telemetry_batches';
    return ds.query(
      `SELECT -1 AS socket, ${bucket('b.ts')} AS k, avg(b.chamber_c) AS avg, min(b.chamber_c) AS min, max(b.chamber_c) AS max
         FROM ${table} b WHERE b.rig_id = $1 AND b.ts >= $2 AND b.ts < $3 GROUP BY 2
         UNION ALL
         SELECT s.socket, ${bucket('b.ts')} AS k, avg(s.case_c), min(s.case_c), max(s.case_c)
         FROM ${table} b CROSS JOIN LATERAL unnest(b.socket, b.case_c) AS s(socket, case_c)
         WHERE b.rig_id = $1 AND b.ts >= $2 AND b.ts < $3 AND s.socket = ANY($6::smallint[]) GROUP BY 1, 2
         ORDER BY 1, 2`,
      params,
    );
  }
  const [table, col] = tier === 'minute' ? ['telemetry_rollups', 'minute'] : ['telemetry_hourly', 'hour'];
  return ds.query(
    `SELECT u.socket, ${bucket(`u.${col}`)} AS k, sum(u.sum_c) / sum(u.n) AS avg, min(u.min_c) AS min, max(u.max_c) AS max
       FROM ${table} u
       WHERE u.rig_id = $1 AND u.socket = ANY(array_prepend(-1::smallint, $6::smallint[])) AND u.${col} >= $2 AND u.${col} < $3
       GROUP BY 1, 2 ORDER BY 1, 2`,
    params,
  );
}

/** Whether telemetry_kept holds any raw message of the rig in [from, to) (the chart then reads it). */
export async function keptRawExists(ds: DataSource, rigId: string, from: Date, to: Date): Promise<boolean> {
  const rows: unknown[] = await ds.query(`SELECT 1 FROM telemetry_kept WHERE rig_id = $1 AND ts >= $2 AND ts < $3 LIMIT 1`, [
    rigId,
    from,
    to,
  ]);
  return rows.length > 0;
}
