/**
 * The live floor: every rig as a tile (one query), a rig's socket board (two queries) and its
 * temperature chart downsampled in SQL.
 *
 * Chart rule: a span of up to 30 minutes is drawn from the raw telemetry samples (at 4 messages/s
 * that is ≤ 7,200 messages per series); a longer span from the per-minute rollups. Either way the
 * span is cut into `points` equal buckets and each bucket gives avg / min / max, so a series never
 * has more than `points` points.
 *
 * The raw chart reads the window's messages by (rig_id, ts) and each message's sockets by primary
 * key. The samples sit in a LATERAL subquery with OFFSET 0 (an optimisation fence) so the planner
 * cannot turn it into a hash join: with telemetry_samples in the millions and the row estimate for
 * a time window off (ts and rig are correlated), it chose a parallel sequential scan of the whole
 * table (bench: 414 ms → 29 ms for a 30-minute window over 1.1 M samples; the gap grows with the table).
 */
import {
  CHART_RAW_SPAN_MS,
  type ChartPoint,
  type FloorBoard,
  type FloorChart,
  type FloorChartQuery,
  type FloorSocket,
  type FloorTile,
} from '../../../shared/schemas/floor';
import { ON_RIG_STATES, type RunState } from '../../../shared/domain/run-states';
import type { AppContext } from '../../context';
import { notFound } from '../../http/errors';
import { ALARM_EVENT, RUN_EVENT } from '../../events';

interface TileRow {
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
  loaded: number;
  powered: number;
  tripped: number;
  max_case_c: number | null;
  open_alarms: number;
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
  SELECT DISTINCT ON (x.rig_id) x.rig_id, x.id, x.code, x.state, x.stress_hours, x.next_read_point, x.plan_id
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
       p.read_points_h,
       COALESCE(rm.loaded, 0)::int AS loaded, COALESCE(ts.powered, 0)::int AS powered,
       (COALESCE(ts.tripped, 0) + COALESCE(cardinality(rm.latched), 0) - COALESCE(ts.tripped_latched, 0))::int AS tripped,
       ts.max_case_c,
       (SELECT count(*) FROM alarms a WHERE a.rig_id = r.id AND a.acknowledged_at IS NULL)::int AS open_alarms
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
WHERE ($1::uuid[] IS NULL OR r.id = ANY($1::uuid[]))
ORDER BY r.active DESC, r.code`;

const round = (n: number, d = 2) => Math.round(n * 10 ** d) / 10 ** d;

function nextReadPoint(readPoints: number[] | null, index: number | null, stressHours: number): number | null {
  if (!readPoints?.length) return null;
  const sorted = [...readPoints].sort((a, b) => a - b);
  const byIndex = index !== null && index >= 0 && index < sorted.length ? sorted[index] : null;
  if (byIndex !== null && byIndex > stressHours) return byIndex;
  return sorted.find((h) => h > stressHours) ?? null;
}

export class FloorService {
  /**
   * The whole-floor query in flight, shared by every request that arrives while it runs (many
   * floor screens and polls ask at once; one statement answers them all). A change people make —
   * an alarm raised or acknowledged, a run moved (ALARM_EVENT / RUN_EVENT) — detaches it, so a request after
   * the change never gets an answer read before it. Telemetry is continuous and not waited for.
   */
  private shared: Promise<FloorTile[]> | null = null;

  constructor(private readonly ctx: AppContext) {
    const detach = () => {
      this.shared = null;
    };
    ctx.events.on(ALARM_EVENT, detach);
    ctx.events.on(RUN_EVENT, detach);
  }

  private toTile(r: TileRow): FloorTile {
    let run: FloorTile['run'] = null;
    if (r.run_id && r.run_code && r.run_state) {
      const stressHours = r.stress_hours ?? 0;
      const next = r.run_state === 'stressing' ? nextReadPoint(r.read_points_h, r.next_read_point, stressHours) : null;
      const left = next !== null ? round(next - stressHours, 3) : null;
      // clockRate = stress hours per wall second in demo mode.
      const rate = this.ctx.config.clockRate > 0 ? this.ctx.config.clockRate : 1;
      run = {
        id: r.run_id,
        code: r.run_code,
        state: r.run_state,
        stressHours: round(stressHours, 3),
        nextReadPointH: next,
        hoursToNextReadPoint: left,
        nextReadPointEta: left !== null ? new Date(this.ctx.now().getTime() + (left / rate) * 1000).toISOString() : null,
      };
    }
    const loaded = r.run_id ? r.loaded : 0;
    return {
      rigId: r.id,
      code: r.code,
      name: r.name,
      location: r.location,
      active: r.active,
      online: r.online,
      lastSeenAt: r.last_seen_at ? r.last_seen_at.toISOString() : null,
      lastSampleAt: r.last_ts ? r.last_ts.toISOString() : null,
      chamberC: r.chamber_c,
      setpointC: r.setpoint_c,
      humidityPct: r.humidity_pct,
      maxTempC: r.max_temp_c,
      socketCount: r.socket_count,
      powered: r.powered,
      tripped: r.tripped,
      empty: Math.max(0, r.socket_count - loaded),
      maxCaseC: r.max_case_c,
      openAlarms: r.open_alarms,
      run,
    };
  }

  /** Every rig, or only these rig ids (the stream's deltas). */
  async tiles(rigIds?: string[]): Promise<FloorTile[]> {
    if (rigIds) return this.readTiles(rigIds);
    if (!this.shared) {
      const p: Promise<FloorTile[]> = this.readTiles().finally(() => {
        if (this.shared === p) this.shared = null;
      });
      this.shared = p;
    }
    return this.shared;
  }

  private async readTiles(rigIds?: string[]): Promise<FloorTile[]> {
    const rows: TileRow[] = await this.ctx.ds.query(TILE_SQL, [rigIds ?? null, ON_RIG_STATES]);
    return rows.map((r) => this.toTile(r));
  }

  private async rigIdOf(code: string): Promise<string> {
    const rows: Array<{ id: string }> = await this.ctx.ds.query('SELECT id FROM rigs WHERE code = $1', [code]);
    if (!rows.length) throw notFound(`Rig ${code}`);
    return rows[0].id;
  }

  async board(code: string): Promise<FloorBoard> {
    const rigId = await this.rigIdOf(code);
    const [tile] = await this.tiles([rigId]);
    const rows: Array<{
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
    }> = await this.ctx.ds.query(
      `SELECT r.last_seq, g.socket, ts.case_c, ts.v_v, ts.i_a, ts.bias_on, ts.tripped, d.serial, rs.tripped AS run_tripped, rs.trip_reason
       FROM rigs r
       CROSS JOIN LATERAL generate_series(0, r.socket_count - 1) AS g(socket)
       LEFT JOIN telemetry_samples ts ON ts.rig_id = r.id AND ts.seq = r.last_seq AND ts.socket = g.socket
       LEFT JOIN run_sockets rs ON rs.run_id = $2 AND rs.socket_index = g.socket
       LEFT JOIN devices d ON d.id = rs.device_id
       WHERE r.id = $1
       ORDER BY g.socket`,
      [rigId, tile.run?.id ?? null],
    );
    const sockets: FloorSocket[] = rows.map((r) => ({
      index: r.socket,
      caseC: r.case_c,
      vV: r.v_v,
      iA: r.i_a,
      biasOn: r.bias_on ?? false,
      tripped: !!(r.tripped || r.run_tripped),
      serial: r.serial,
      tripReason: r.trip_reason,
    }));
    const hasSample = rows.some((r) => r.case_c !== null);
    return {
      tile,
      seq: hasSample ? Number(rows[0].last_seq) : null,
      sampleAt: tile.lastSampleAt,
      sockets,
    };
  }

  async chart(code: string, q: FloorChartQuery): Promise<FloorChart> {
    const rigId = await this.rigIdOf(code);
    // Default window: the hour up to the newest message (or now).
    let to = q.to ? new Date(q.to) : null;
    if (!to) {
      const [b]: Array<{ ts: Date | null }> = await this.ctx.ds.query(
        'SELECT b.ts FROM rigs r LEFT JOIN telemetry_batches b ON b.rig_id = r.id AND b.seq = r.last_seq WHERE r.id = $1',
        [rigId],
      );
      to = b?.ts ? new Date(b.ts.getTime() + 1) : this.ctx.now();
    }
    const from = q.from ? new Date(q.from) : new Date(to.getTime() - 3_600_000);
    const spanMs = to.getTime() - from.getTime();
    const points = q.points;
    const bucketMs = spanMs / points;
    let sockets = q.sockets;
    if (!sockets) {
      const hot: Array<{ socket: number }> = await this.ctx.ds.query(
        `SELECT ts.socket FROM rigs r JOIN telemetry_samples ts ON ts.rig_id = r.id AND ts.seq = r.last_seq
         WHERE r.id = $1 ORDER BY ts.case_c DESC, ts.socket LIMIT 3`,
        [rigId],
      );
      sockets = hot.map((h) => h.socket).sort((a, b) => a - b);
    }
    const source: FloorChart['source'] = spanMs <= CHART_RAW_SPAN_MS ? 'raw' : 'rollup';
    // k = bucket number 0…points-1; LEAST guards the last instant.
    const bucket = (col: string) => `LEAST(floor(extract(epoch FROM (${col} - $2::timestamptz)) * 1000 / $4)::int, $5 - 1)`;
    type Row = { socket: number; k: number; avg: number; min: number; max: number };
    let rows: Row[];
    if (source === 'raw') {
      rows = await this.ctx.ds.query(
        `SELECT -1 AS socket, ${bucket('b.ts')} AS k, avg(b.chamber_c) AS avg, min(b.chamber_c) AS min, max(b.chamber_c) AS max
         FROM telemetry_batches b WHERE b.rig_id = $1 AND b.ts >= $2 AND b.ts < $3 GROUP BY 2
         UNION ALL
         SELECT s.socket, ${bucket('b.ts')} AS k, avg(s.case_c), min(s.case_c), max(s.case_c)
         FROM telemetry_batches b
         CROSS JOIN LATERAL (
           SELECT x.socket, x.case_c FROM telemetry_samples x
           WHERE x.rig_id = b.rig_id AND x.seq = b.seq AND x.socket = ANY($6::smallint[])
           OFFSET 0
         ) s
         WHERE b.rig_id = $1 AND b.ts >= $2 AND b.ts < $3 GROUP BY 1, 2
         ORDER BY 1, 2`,
        [rigId, from, to, bucketMs, points, sockets],
      );
    } else {
      rows = await this.ctx.ds.query(
        `SELECT u.socket, ${bucket('u.minute')} AS k, sum(u.sum_c) / sum(u.n) AS avg, min(u.min_c) AS min, max(u.max_c) AS max
         FROM telemetry_rollups u
         WHERE u.rig_id = $1 AND u.socket = ANY(array_prepend(-1::smallint, $6::smallint[])) AND u.minute >= $2 AND u.minute < $3
         GROUP BY 1, 2 ORDER BY 1, 2`,
        [rigId, from, to, bucketMs, points, sockets],
      );
    }
    const series = new Map<number, ChartPoint[]>();
    for (const r of rows) {
      const t = new Date(from.getTime() + (Number(r.k) + 0.5) * bucketMs).toISOString();
      let list = series.get(Number(r.socket));
      if (!list) series.set(Number(r.socket), (list = []));
      list.push({ t, avg: round(Number(r.avg)), min: round(Number(r.min)), max: round(Number(r.max)) });
    }
    return {
      from: from.toISOString(),
      to: to.toISOString(),
      source,
      bucketMs: Math.round(bucketMs),
      chamber: series.get(-1) ?? [],
      sockets: sockets.map((socket) => ({ socket, points: series.get(socket) ?? [] })),
    };
  }
}
