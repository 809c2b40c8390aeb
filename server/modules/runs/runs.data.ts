/**
 * The runs module's SQL: hour accrual (inside the run engine's transaction, run row locked), the
 * batched reads behind run views, the timeline's runs, booking's lock and socket loading's checks.
 * Every function takes the EntityManager of the caller's transaction where there is one.
 */
import type { EntityManager } from 'typeorm';
import { ON_RIG_STATES, sqlStateList, TERMINAL_STATES, type RunState } from '../../../shared/domain/run-states';
import { RunEntity } from '../../db/entities';

/** Accrual: the run's stress hours and how far telemetry has been accrued (skips `updated_at` on purpose). */
export async function storeRunAccrual(
  m: EntityManager,
  runId: string,
  hours: number,
  lastSeq: number,
  lastClock: number | null,
): Promise<void> {
  await m.query(`UPDATE runs SET stress_hours = $1, accrued_to_seq = $2, accrued_to_clock_s = $3 WHERE id = $4`, [
    hours,
    lastSeq,
    lastClock,
    runId,
  ]);
}

/** Accrual: per-socket hours, and the sockets newly seen tripped in telemetry latched (first trip time and reason kept). */
export async function storeSocketAccrual(
  m: EntityManager,
  runId: string,
  now: Date,
  sockets: number[],
  hours: number[],
  newlyTripped: boolean[],
): Promise<void> {
  await m.query(
    `UPDATE run_sockets rs SET accrued_hours = v.h,
         tripped = rs.tripped OR v.t,
         tripped_at = CASE WHEN v.t AND NOT rs.tripped THEN $4::timestamptz ELSE rs.tripped_at END,
         trip_reason = CASE WHEN v.t AND NOT rs.tripped THEN coalesce(rs.trip_reason, 'Tripped at the rig (seen in telemetry)') ELSE rs.trip_reason END
       FROM unnest($1::int[], $2::float8[], $3::bool[]) AS v(socket, h, t)
       WHERE rs.run_id = $5 AND rs.socket_index = v.socket`,
    [sockets, hours, newlyTripped, now, runId],
  );
}

/** Accrual: θjc of the device type loaded in each of the run's sockets (for the junction estimate). */
export async function socketThetaJc(m: EntityManager, runId: string): Promise<Map<number, number>> {
  const rows: Array<{ socket: number; theta: unknown }> = await m.query(
    `SELECT s.socket_index AS socket, t.theta_jc_c_per_w AS theta
       FROM run_sockets s JOIN devices d ON d.id = s.device_id JOIN lots l ON l.id = d.lot_id JOIN device_types t ON t.id = l.device_type_id
      WHERE s.run_id = $1`,
    [runId],
  );
  return new Map(rows.map((r) => [Number(r.socket), Number(r.theta)]));
}

/** Accrual: each changed socket's credited hours by junction temperature (whole list, jsonb). */
export async function storeSocketSegments(m: EntityManager, runId: string, sockets: number[], segments: string[]): Promise<void> {
  if (!sockets.length) return;
  await m.query(
    `UPDATE run_sockets rs SET stress_segments = v.seg::jsonb
       FROM unnest($1::int[], $2::text[]) AS v(socket, seg)
       WHERE rs.run_id = $3 AND rs.socket_index = v.socket`,
    [sockets, segments, runId],
  );
}

/** Loaded and tripped socket counts of these runs (runs with no sockets have no row). */
export function socketCountsOfRuns(
  m: EntityManager,
  runIds: string[],
): Promise<Array<{ run_id: string; loaded: number; tripped: number }>> {
  return m.query(
    `SELECT run_id, count(*)::int AS loaded, count(*) FILTER (WHERE tripped)::int AS tripped FROM run_sockets WHERE run_id = ANY($1) GROUP BY run_id`,
    [runIds],
  );
}

/** The codes of each sample's runs, sorted. */
export function runCodesOfSamples(m: EntityManager, sampleIds: string[]): Promise<Array<{ sample_id: string; codes: string[] }>> {
  return m.query(`SELECT sample_id, array_agg(code ORDER BY code) AS codes FROM runs WHERE sample_id = ANY($1) GROUP BY sample_id`, [
    sampleIds,
  ]);
}

/** A sample's runs with their rig codes, by run code. */
export function runsOfSample(
  m: EntityManager,
  sampleId: string,
): Promise<Array<{ id: string; code: string; rig_code: string | null; sample_size: number; state: RunState }>> {
  return m.query(
    `SELECT r.id, r.code, g.code AS rig_code, r.sample_size, r.state FROM runs r LEFT JOIN rigs g ON g.id = r.rig_id WHERE r.sample_id = $1 ORDER BY r.code`,
    [sampleId],
  );
}

export interface RunSocketRow {
  socket: number;
  device_id: string;
  serial: string;
  lot: string;
  hours: number | string;
  tripped: boolean;
  reason: string | null;
  failed: number | string | null;
}

/** A run's loaded sockets with serial, lot, hours and trip, by socket. */
export function runSocketRows(m: EntityManager, runId: string): Promise<RunSocketRow[]> {
  return m.query(
    `SELECT s.socket_index AS socket, s.device_id, d.serial, l.code AS lot, s.accrued_hours AS hours, s.tripped, s.trip_reason AS reason, s.failed_at_h AS failed
     FROM run_sockets s JOIN devices d ON d.id = s.device_id JOIN lots l ON l.id = d.lot_id
     WHERE s.run_id = $1 ORDER BY s.socket_index`,
    [runId],
  );
}

const ON_RIG_IN_SQL = sqlStateList(ON_RIG_STATES);

/** Sockets of the rig held by other runs that sit on it now, with those runs' codes. */
export function socketsHeldOnRig(
  m: EntityManager,
  rigId: string,
  exceptRunId: string,
): Promise<Array<{ socket_index: number; code: string }>> {
  return m.query(
    `SELECT s.socket_index, r.code FROM run_sockets s JOIN runs r ON r.id = s.run_id
     WHERE r.rig_id = $1 AND r.id <> $2 AND r.state IN ${ON_RIG_IN_SQL}`,
    [rigId, exceptRunId],
  );
}

/** The timeline's runs: on a rig and open (in `openStates`) or finished after `recent`. */
export function timelineRuns(m: EntityManager, openStates: readonly RunState[], recent: Date): Promise<RunEntity[]> {
  return m
    .createQueryBuilder(RunEntity, 'r')
    .where('r.rigId IS NOT NULL')
    .andWhere('(r.state IN (:...open) OR (r.finishedAt IS NOT NULL AND r.finishedAt > :recent))', {
      open: [...openStates],
      recent,
    })
    .getMany();
}

/** A transaction-scoped advisory lock (released at commit or rollback); `m` is the transaction's manager. */
export async function advisoryXactLock(m: EntityManager, key: number): Promise<void> {
  await m.query('SELECT pg_advisory_xact_lock($1)', [key]);
}

/** A change to the run that is not a state change (its sockets reloaded): new row version, updated_at now. */
export async function bumpRunRowVersion(m: EntityManager, runId: string): Promise<void> {
  await m.query(`UPDATE runs SET row_version = row_version + 1, updated_at = now() WHERE id = $1`, [runId]);
}

/** Devices with these serials (exact), with their lot's code. */
export function devicesBySerial(
  m: EntityManager,
  serials: string[],
): Promise<Array<{ id: string; serial: string; lot_id: string; lot_code: string }>> {
  return m.query(
    `SELECT d.id, d.serial, d.lot_id, l.code AS lot_code FROM devices d JOIN lots l ON l.id = d.lot_id WHERE d.serial = ANY($1)`,
    [serials],
  );
}

/** Of these devices, those loaded in another run that has not finished or been aborted, with that run's code. */
export function devicesInOpenRuns(
  m: EntityManager,
  deviceIds: string[],
  exceptRunId: string,
): Promise<Array<{ device_id: string; code: string }>> {
  return m.query(
    `SELECT s.device_id, r.code FROM run_sockets s JOIN runs r ON r.id = s.run_id
           WHERE s.device_id = ANY($1) AND r.id <> $2 AND r.state NOT IN ${sqlStateList(TERMINAL_STATES)}`,
    [deviceIds, exceptRunId],
  );
}

/** Serials of the run's loaded devices that have no reading at time zero (read point 0 h) for this run, in socket order. */
export async function devicesWithoutTimeZero(m: EntityManager, runId: string): Promise<Array<{ socket_index: number; serial: string }>> {
  return m.query(
    `SELECT s.socket_index, d.serial FROM run_sockets s JOIN devices d ON d.id = s.device_id
     WHERE s.run_id = $1
       AND NOT EXISTS (SELECT 1 FROM measurements x WHERE x.run_id = s.run_id AND x.device_id = s.device_id AND x.read_point_h = 0)
     ORDER BY s.socket_index`,
    [runId],
  );
}
