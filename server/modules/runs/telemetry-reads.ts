/** Read-only queries on stored telemetry that the scheduler needs (rows in seq order). */
import type { EntityManager } from 'typeorm';
import type { Band, ClockSample, SocketSample } from '../../../shared/scheduling';

export interface BatchRow {
  seq: number;
  clockS: number;
  chamberC: number;
  humidityPct: number | null;
  setpointC: number;
  storedAt: Date;
}

/** A telemetry_batches row as pg returns it (bigint as a string, timestamptz as a Date). */
type BatchSqlRow = Record<'seq' | 'stress_clock_s' | 'chamber_c' | 'humidity_pct' | 'setpoint_c', unknown> & { stored_at: Date | string };

const toBatch = (r: BatchSqlRow): BatchRow => ({
  seq: Number(r.seq),
  clockS: Number(r.stress_clock_s),
  chamberC: Number(r.chamber_c),
  humidityPct: r.humidity_pct === null ? null : Number(r.humidity_pct),
  setpointC: Number(r.setpoint_c),
  storedAt: r.stored_at instanceof Date ? r.stored_at : new Date(r.stored_at),
});

const COLS = 'seq, stress_clock_s, chamber_c, humidity_pct, setpoint_c, stored_at';

export async function maxSeq(m: EntityManager, rigId: string): Promise<number> {
  const [r] = await m.query(`SELECT coalesce(max(seq), 0) AS s FROM telemetry_batches WHERE rig_id = $1`, [rigId]);
  return Number(r.s);
}

export async function latestBatch(m: EntityManager, rigId: string): Promise<BatchRow | null> {
  const rows = await m.query(`SELECT ${COLS} FROM telemetry_batches WHERE rig_id = $1 ORDER BY seq DESC LIMIT 1`, [rigId]);
  return rows.length ? toBatch(rows[0]) : null;
}

export async function batchAt(m: EntityManager, rigId: string, seq: number): Promise<BatchRow | null> {
  const rows = await m.query(`SELECT ${COLS} FROM telemetry_batches WHERE rig_id = $1 AND seq = $2`, [rigId, seq]);
  return rows.length ? toBatch(rows[0]) : null;
}

export async function batchesAfter(m: EntityManager, rigId: string, afterSeq: number, limit: number): Promise<BatchRow[]> {
  const rows = await m.query(`SELECT ${COLS} FROM telemetry_batches WHERE rig_id = $1 AND seq > $2 ORDER BY seq LIMIT $3`, [
    rigId,
    afterSeq,
    limit,
  ]);
  return rows.map(toBatch);
}

/**
 * Socket readings of the given sockets for seqs in [fromSeq, toSeq], grouped by seq; with
 * `withCycles` each reading also carries the rig's power-cycling report (telemetry_cycles) when
 * there is one.
 */
export async function socketSamples(
  m: EntityManager,
  rigId: string,
  fromSeq: number,
  toSeq: number,
  sockets: number[],
  withCycles = false,
): Promise<Map<number, SocketSample[]>> {
  const out = new Map<number, SocketSample[]>();
  if (!sockets.length || toSeq < fromSeq) return out;
  const rows: Array<Record<string, unknown>> = await m.query(
    withCycles
      ? `SELECT s.seq, s.socket, s.v_v, s.bias_on, s.tripped, s.case_c, s.i_a, c.cycles, c.d_tj_low_c, c.d_tj_high_c FROM telemetry_samples s
         LEFT JOIN telemetry_cycles c ON c.rig_id = s.rig_id AND c.seq = s.seq AND c.socket = s.socket
         WHERE s.rig_id = $1 AND s.seq >= $2 AND s.seq <= $3 AND s.socket = ANY($4::smallint[]) ORDER BY s.seq, s.socket`
      : `SELECT seq, socket, v_v, bias_on, tripped, case_c, i_a FROM telemetry_samples
     WHERE rig_id = $1 AND seq >= $2 AND seq <= $3 AND socket = ANY($4::smallint[]) ORDER BY seq, socket`,
    [rigId, fromSeq, toSeq, sockets],
  );
  const num = (x: unknown): number | null => (x === null || x === undefined ? null : Number(x));
  for (const r of rows) {
    const seq = Number(r.seq);
    const list = out.get(seq) ?? [];
    const sample: SocketSample = {
      socket: Number(r.socket),
      vV: Number(r.v_v),
      biasOn: Boolean(r.bias_on),
      tripped: Boolean(r.tripped),
      caseC: Number(r.case_c),
      iA: Number(r.i_a),
    };
    if (withCycles && r.cycles !== null && r.cycles !== undefined) {
      sample.cycle = { cycles: Number(r.cycles), dTjLowC: num(r.d_tj_low_c), dTjHighC: num(r.d_tj_high_c) };
    }
    list.push(sample);
    out.set(seq, list);
  }
  return out;
}

export const toClockSample = (b: BatchRow, sockets: SocketSample[] = []): ClockSample => ({
  seq: b.seq,
  clockS: b.clockS,
  chamberC: b.chamberC,
  humidityPct: b.humidityPct,
  sockets,
});

/** First batch after `afterSeq` with the chamber (and humidity) inside the band. */
export async function firstInBand(
  m: EntityManager,
  rigId: string,
  afterSeq: number,
  band: Band,
  humidity: { lowPct: number; highPct: number } | null,
): Promise<BatchRow | null> {
  const params: unknown[] = [rigId, afterSeq, band.lowC, band.highC];
  let extra = '';
  if (humidity) {
    params.push(humidity.lowPct, humidity.highPct);
    extra = ' AND humidity_pct BETWEEN $5 AND $6';
  }
  const rows = await m.query(
    `SELECT ${COLS} FROM telemetry_batches WHERE rig_id = $1 AND seq > $2 AND chamber_c BETWEEN $3 AND $4${extra} ORDER BY seq LIMIT 1`,
    params,
  );
  return rows.length ? toBatch(rows[0]) : null;
}

/** Stress-clock seconds elapsed from batch `fromSeq` on (sum of forward steps; a reboot adds nothing). */
export async function clockElapsedS(
  m: EntityManager,
  rigId: string,
  fromSeq: number,
): Promise<{ elapsedS: number; lastChamberC: number | null }> {
  const [r] = await m.query(
    `SELECT coalesce(sum(greatest(d, 0)), 0) AS elapsed,
            (SELECT chamber_c FROM telemetry_batches WHERE rig_id = $1 ORDER BY seq DESC LIMIT 1) AS last_c
     FROM (SELECT stress_clock_s - lag(stress_clock_s) OVER (ORDER BY seq) AS d
           FROM telemetry_batches WHERE rig_id = $1 AND seq >= $2) x`,
    [rigId, fromSeq],
  );
  return { elapsedS: Number(r.elapsed), lastChamberC: r.last_c === null ? null : Number(r.last_c) };
}

/** The sockets in the rig's latest stored telemetry (what the rig itself reports), with that message's time; null = it never reported. */
export async function reportedSockets(m: EntityManager, rigId: string): Promise<{ sockets: number[]; ts: Date } | null> {
  const rows: Array<{ socket: number | null; ts: Date | string }> = await m.query(
    `SELECT s.socket, b.ts FROM (SELECT seq, ts FROM telemetry_batches WHERE rig_id = $1 ORDER BY seq DESC LIMIT 1) b
     LEFT JOIN telemetry_samples s ON s.rig_id = $1 AND s.seq = b.seq ORDER BY s.socket`,
    [rigId],
  );
  if (!rows.length) return null;
  const ts = rows[0].ts instanceof Date ? rows[0].ts : new Date(rows[0].ts);
  return { sockets: rows.filter((r) => r.socket !== null).map((r) => Number(r.socket)), ts };
}
