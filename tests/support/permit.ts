/**
 * What a test needs before a run may start (the start permit, server/modules/runs/start-permit.ts):
 * the rig's calibration and interlock-test dates, a telemetry report naming its sockets, and a
 * time-zero reading for every loaded device. Each piece can be left out to test its refusal.
 */
import type { DataSource } from 'typeorm';
import { MeasurementEntity, RigEntity, RunSocketEntity } from '../../server/db/entities';

const DAY_MS = 86_400_000;

/** Calibration due in 180 days, interlocks tested yesterday. */
export async function setRigServiceDates(
  ds: DataSource,
  rigId: string,
  at: { calibrationDueAt?: Date | null; interlockTestedAt?: Date | null } = {},
): Promise<void> {
  const now = Date.now();
  await ds.getRepository(RigEntity).update(
    { id: rigId },
    {
      calibrationDueAt: at.calibrationDueAt === undefined ? new Date(now + 180 * DAY_MS) : at.calibrationDueAt,
      interlockTestedAt: at.interlockTestedAt === undefined ? new Date(now - DAY_MS) : at.interlockTestedAt,
    },
  );
}

/**
 * One stored telemetry message of the rig reporting `sockets` (all unbiased, at room temperature),
 * as ingest would store it. `seq` and `clockS` let a test that counts seqs and stress-clock time
 * place it where it changes nothing (e.g. seq 0 with the clock of its first own sample).
 */
export async function reportSockets(
  ds: DataSource,
  rigId: string,
  sockets: number[],
  opts: { seq?: number; clockS?: number } = {},
): Promise<void> {
  const seq = opts.seq ?? 0;
  await ds.query(
    `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c) VALUES ($1, $2, now(), $3, 25, null, 25)`,
    [rigId, seq, opts.clockS ?? 0],
  );
  for (const k of sockets) {
    await ds.query(
      `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped) VALUES ($1, $2, $3, 25, 0, 0, false, false)`,
      [rigId, seq, k],
    );
  }
}

/** A time-zero (0 h) reading for every device loaded in the run (or the first `only` of them) that has none yet. */
export async function recordTimeZero(ds: DataSource, runId: string, only?: number): Promise<number> {
  const loaded = await ds.getRepository(RunSocketEntity).find({ where: { runId }, order: { socketIndex: 'ASC' } });
  const have = new Set((await ds.getRepository(MeasurementEntity).find({ where: { runId, readPointH: 0 } })).map((x) => x.deviceId));
  const rows = loaded
    .slice(0, only ?? loaded.length)
    .filter((s) => !have.has(s.deviceId))
    .map((s) => ({
      runId,
      deviceId: s.deviceId,
      readPointH: 0,
      hfe: 120,
      hfeIcA: 0.15,
      hfeVceV: 10,
      icboA: 2e-8,
      icboVcbV: 100,
      measuredC: 25,
      measuredAt: new Date(),
    }));
  if (rows.length) await ds.getRepository(MeasurementEntity).insert(rows);
  return rows.length;
}

/** Everything the permit asks for: service dates, a report of the rig's sockets, time-zero readings. */
export async function grantStartPermit(
  ds: DataSource,
  runId: string,
  rigId: string,
  opts: { sockets?: number[]; seq?: number; clockS?: number } = {},
): Promise<void> {
  await setRigServiceDates(ds, rigId);
  const loaded = await ds.getRepository(RunSocketEntity).find({ where: { runId } });
  const rig = await ds.getRepository(RigEntity).findOneByOrFail({ id: rigId });
  const sockets = opts.sockets ?? Array.from({ length: rig.socketCount }, (_, k) => k);
  if (!loaded.every((s) => sockets.includes(s.socketIndex))) throw new Error('grantStartPermit: a loaded socket is not in the report');
  const reported = await ds.query(`SELECT 1 FROM telemetry_batches WHERE rig_id = $1 LIMIT 1`, [rigId]);
  if (!reported.length) await reportSockets(ds, rigId, sockets, { seq: opts.seq, clockS: opts.clockS });
  await recordTimeZero(ds, runId);
}

/**
 * For a test with a real simulated rig: waits (up to 5 s) until the rig's own telemetry is stored —
 * the permit reads the reported sockets from it — after giving the service dates and time-zero readings.
 */
export async function permitFromLiveRig(ds: DataSource, runId: string, rigId: string): Promise<void> {
  await setRigServiceDates(ds, rigId);
  await recordTimeZero(ds, runId);
  for (let k = 0; k < 100 && !(await ds.query('SELECT 1 FROM telemetry_batches WHERE rig_id = $1 LIMIT 1', [rigId])).length; k++) {
    await new Promise((r) => setTimeout(r, 50));
  }
}
