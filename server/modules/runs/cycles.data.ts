/** SQL of power-cycling accrual and its per-socket read (shared/scheduling/cycling.ts). */
import type { EntityManager } from 'typeorm';
import { isCyclingKind, PLAN_KINDS } from '../../../shared/domain/stress';

/** The run's credited cycles (its read points and end count them). */
export async function storeRunCycles(m: EntityManager, runId: string, cycles: number): Promise<void> {
  await m.query(`UPDATE runs SET cycles_done = $1 WHERE id = $2`, [cycles, runId]);
}

/** Per socket: credited and missed cycles, and the junction swing last reported. */
export async function storeSocketCycles(
  m: EntityManager,
  runId: string,
  rows: Array<{ socket: number; done: number; missed: number; low: number | null; high: number | null }>,
): Promise<void> {
  if (!rows.length) return;
  const sorted = [...rows].sort((a, b) => a.socket - b.socket);
  await m.query(
    `UPDATE run_sockets rs SET cycles_done = v.done, cycles_missed = v.missed, last_d_tj_low_c = v.low, last_d_tj_high_c = v.high
       FROM unnest($1::int[], $2::int[], $3::int[], $4::real[], $5::real[]) AS v(socket, done, missed, low, high)
      WHERE rs.run_id = $6 AND rs.socket_index = v.socket`,
    [
      sorted.map((r) => r.socket),
      sorted.map((r) => r.done),
      sorted.map((r) => r.missed),
      sorted.map((r) => r.low),
      sorted.map((r) => r.high),
      runId,
    ],
  );
}

/** One socket of a run as power cycling credited it. */
export interface SocketCycles {
  socket: number;
  serial: string;
  /** Cycles credited: completed with a junction swing within the plan's band. */
  cyclesDone: number;
  /** Cycles the rig completed that were not credited (swing outside the band, chamber out, socket off). */
  cyclesMissed: number;
  /** The smallest and largest swing (K) of the cycles the rig last reported for this socket. */
  lastDTjLowC: number | null;
  lastDTjHighC: number | null;
  /** Stress hours credited to the socket (its own hour accrual). */
  accruedHours: number;
}

/**
 * Per-socket cycle counts and junction swings of a run, in socket order: the read for anything
 * that needs a device's cycling history (the run page, Coffin–Manson credit).
 */
export async function socketCyclesOfRun(m: EntityManager, runId: string): Promise<SocketCycles[]> {
  const rows: Array<Record<string, unknown>> = await m.query(
    `SELECT rs.socket_index, d.serial, rs.cycles_done, rs.cycles_missed, rs.last_d_tj_low_c, rs.last_d_tj_high_c, rs.accrued_hours
       FROM run_sockets rs JOIN devices d ON d.id = rs.device_id
      WHERE rs.run_id = $1 ORDER BY rs.socket_index`,
    [runId],
  );
  const num = (x: unknown): number | null => (x === null || x === undefined ? null : Number(x));
  return rows.map((r) => ({
    socket: Number(r.socket_index),
    serial: String(r.serial),
    cyclesDone: Number(r.cycles_done),
    cyclesMissed: Number(r.cycles_missed),
    lastDTjLowC: num(r.last_d_tj_low_c),
    lastDTjHighC: num(r.last_d_tj_high_c),
    accruedHours: Number(r.accrued_hours),
  }));
}

/** The cycle target of a run counted in cycles (its plan is a cycling kind with cycle settings), else null. */
export async function runCycleTarget(m: EntityManager, runId: string): Promise<number | null> {
  const rows: Array<{ kind: string; cycles: unknown }> = await m.query(
    `SELECT p.kind, p.cycle->'cycles' AS cycles FROM runs r JOIN stress_plans p ON p.id = r.plan_id WHERE r.id = $1`,
    [runId],
  );
  const r = rows[0];
  if (!r || !isCyclingKindName(r.kind) || r.cycles === null || r.cycles === undefined) return null;
  return Number(r.cycles);
}

const isCyclingKindName = (kind: string): boolean => PLAN_KINDS.some((k) => k === kind && isCyclingKind(k));
