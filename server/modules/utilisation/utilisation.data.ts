/** Stored facts the utilisation figures are made of (shared/scheduling/utilisation.ts says how). */
import type { EntityManager } from 'typeorm';

export interface UsageRunRow {
  id: string;
  rig_id: string;
  state: string;
  sample_size: number;
  scheduled_start: Date | null;
  scheduled_end: Date | null;
  started_at: Date | null;
  finished_at: Date | null;
  credited_socket_h: number;
  trips: Date[] | null;
}

/** Runs whose window on a rig may meet [from, to): with their credited socket-hours and trip times. */
export function usageRuns(m: EntityManager, from: Date, to: Date): Promise<UsageRunRow[]> {
  return m.query(
    `SELECT r.id, r.rig_id, r.state, r.sample_size, r.scheduled_start, r.scheduled_end, r.started_at, r.finished_at,
            COALESCE((SELECT sum(s.accrued_hours) FROM run_sockets s WHERE s.run_id = r.id), 0)::float8 AS credited_socket_h,
            (SELECT array_agg(s.tripped_at ORDER BY s.tripped_at) FROM run_sockets s WHERE s.run_id = r.id AND s.tripped AND s.tripped_at IS NOT NULL) AS trips
     FROM runs r
     WHERE r.rig_id IS NOT NULL
       AND LEAST(COALESCE(r.started_at, r.scheduled_start), r.scheduled_start) < $2
       AND COALESCE(r.finished_at, GREATEST(r.scheduled_end, $2)) > $1`,
    [from, to],
  );
}

export interface TransitionRow {
  run_id: string;
  at: Date;
  to_state: string;
}

/** Every recorded state change of these runs (audit details.from/to), in order. */
export function transitions(m: EntityManager, runIds: string[]): Promise<TransitionRow[]> {
  if (!runIds.length) return Promise.resolve([]);
  return m.query(
    `SELECT entity_id AS run_id, at, details->>'to' AS to_state FROM audit_log
     WHERE entity = 'run' AND entity_id = ANY($1::text[]) AND details ? 'to' AND details ? 'from'
     ORDER BY entity_id, id`,
    [runIds],
  );
}

export function rigCodes(m: EntityManager): Promise<Array<{ id: string; code: string }>> {
  return m.query(`SELECT id, code FROM rigs ORDER BY code`);
}

export interface TurnaroundRow {
  lot_code: string;
  requested_at: Date;
  signed_at: Date;
}

/**
 * Per lot: its first booking (the earliest created run holding it: the run request) and the first
 * signature of its verdict after that, for lots first signed in [from, to).
 */
export function turnaround(m: EntityManager, from: Date, to: Date): Promise<TurnaroundRow[]> {
  return m.query(
    `SELECT l.code AS lot_code, b.requested_at, s.signed_at
     FROM lots l
     JOIN LATERAL (SELECT min(r.created_at) AS requested_at FROM run_lots rl JOIN runs r ON r.id = rl.run_id WHERE rl.lot_id = l.id) b ON b.requested_at IS NOT NULL
     JOIN LATERAL (SELECT min(v.signed_at) AS signed_at FROM verdict_signatures v WHERE v.lot_id = l.id AND v.signed_at >= b.requested_at) s ON s.signed_at IS NOT NULL
     WHERE s.signed_at >= $1 AND s.signed_at < $2
     ORDER BY s.signed_at`,
    [from, to],
  );
}
