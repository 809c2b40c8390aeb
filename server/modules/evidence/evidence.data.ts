/**
 * Reading the evidence of one sample (or one run) from the database: devices with their credited
 * hours and trips, every reading (with its result, conditions flag and confirmation), dispositions,
 * and the coverage of each read point. docs/verdict-evidence.md describes the tables.
 */
import type { EntityManager } from 'typeorm';
import { DISPOSITION_LABEL, readPointCoverage, type MeasurementResult } from '../../../shared/evidence';
import type { Disposition, EvidenceDevice, EvidenceReading, ReadPointCoverageView, SampleEvidence } from '../../../shared/schemas/evidence';
import { RunEntity, SampleEntity, StressPlanEntity, UserEntity } from '../../db/entities';
import { notFound } from '../../http/errors';
import { recordDeviationVersions } from '../measurements/measurements.data';
import { deviationKinds } from '../measurements/record-gate';

/** A raw SQL row; each reader below converts its columns explicitly. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- node-pg rows are untyped; the fields are read and converted one by one
type SqlRow = Record<string, any>;

const iso = (d: Date | null) => (d ? d.toISOString() : null);

/** A read point counts as reached by a run once its stress hours are within half an hour of it. */
const REACHED_SLACK_H = 0.5;
export const readPointReached = (run: Pick<RunEntity, 'stressHours' | 'state'>, h: number) =>
  h === 0 || run.state === 'finished' || run.stressHours >= h - REACHED_SLACK_H;

export async function runDispositions(m: EntityManager, runIds: string[]): Promise<Disposition[]> {
  if (!runIds.length) return [];
  const rows: SqlRow[] = await m.query(
    `SELECT x.id, x.run_id, x.device_id, d.serial, l.code AS lot_code, x.read_point_h, x.kind, x.reason, x.by_name, x.at
     FROM device_dispositions x JOIN devices d ON d.id = x.device_id JOIN lots l ON l.id = d.lot_id
     WHERE x.run_id = ANY($1) ORDER BY x.at`,
    [runIds],
  );
  return rows.map((r) => ({
    id: r.id,
    runId: r.run_id,
    deviceId: r.device_id,
    serial: r.serial,
    lotCode: r.lot_code,
    readPointH: Number(r.read_point_h),
    kind: r.kind,
    kindLabel: DISPOSITION_LABEL[r.kind as keyof typeof DISPOSITION_LABEL],
    reason: r.reason,
    byName: r.by_name,
    at: new Date(r.at).toISOString(),
  }));
}

export async function evidenceReadings(m: EntityManager, runIds: string[]): Promise<EvidenceReading[]> {
  if (!runIds.length) return [];
  const rows: SqlRow[] = await m.query(
    `SELECT x.*, u.name AS confirmed_by_name FROM measurements x LEFT JOIN users u ON u.id = x.confirmed_by_id
     WHERE x.run_id = ANY($1) ORDER BY x.read_point_h, x.device_id`,
    [runIds],
  );
  const n = (v: unknown) => (v === null || v === undefined ? null : Number(v));
  return rows.map((r) => ({
    id: r.id,
    runId: r.run_id,
    deviceId: r.device_id,
    readPointH: Number(r.read_point_h),
    result: r.result as MeasurementResult,
    hfe: n(r.hfe),
    hfeIcA: n(r.hfe_ic_a),
    hfeVceV: n(r.hfe_vce_v),
    icboA: n(r.icbo_a),
    icboVcbV: n(r.icbo_vcb_v),
    vcesatV: n(r.vcesat_v),
    bvceoV: n(r.bvceo_v),
    measuredC: Number(r.measured_c),
    measuredAt: new Date(r.measured_at).toISOString(),
    late: Boolean(r.late),
    conditionsFlag: r.conditions_flag ?? null,
    confirmedAt: r.confirmed_at ? new Date(r.confirmed_at).toISOString() : null,
    confirmedByName: r.confirmed_by_name ?? null,
    confirmReason: r.confirm_reason ?? null,
  }));
}

export async function evidenceDevices(m: EntityManager, runs: RunEntity[], dispositions: Disposition[]): Promise<EvidenceDevice[]> {
  if (!runs.length) return [];
  const rows: SqlRow[] = await m.query(
    `SELECT s.run_id, r.code AS run_code, g.code AS rig_code, s.device_id, d.serial, d.lot_id, l.code AS lot_code, s.socket_index,
            s.accrued_hours, s.tripped, s.tripped_at, s.failed_at_h
     FROM run_sockets s JOIN runs r ON r.id = s.run_id LEFT JOIN rigs g ON g.id = r.rig_id
     JOIN devices d ON d.id = s.device_id JOIN lots l ON l.id = d.lot_id
     WHERE s.run_id = ANY($1) ORDER BY r.code, s.socket_index`,
    [runs.map((r) => r.id)],
  );
  const disp = new Map(dispositions.map((x) => [`${x.runId}:${x.deviceId}`, x]));
  return rows.map((r) => ({
    deviceId: r.device_id,
    serial: r.serial,
    lotId: r.lot_id,
    lotCode: r.lot_code,
    runId: r.run_id,
    runCode: r.run_code,
    rigCode: r.rig_code ?? null,
    socketIndex: Number(r.socket_index),
    creditedHours: Number(r.accrued_hours),
    tripped: Boolean(r.tripped),
    trippedAt: r.tripped_at ? new Date(r.tripped_at).toISOString() : null,
    failedAtH: r.failed_at_h === null ? null : Number(r.failed_at_h),
    disposition: disp.get(`${r.run_id}:${r.device_id}`) ?? null,
  }));
}

/** Coverage of each of the plan's read points over the given runs (devices of all runs together). */
export function coverageOf(
  runs: RunEntity[],
  readPointsH: number[],
  devices: EvidenceDevice[],
  readings: EvidenceReading[],
  dispositions: Disposition[],
): ReadPointCoverageView[] {
  const byId = new Map(devices.map((d) => [`${d.runId}:${d.deviceId}`, d]));
  const key = (runId: string, deviceId: string) => `${runId}:${deviceId}`;
  const covDevices = devices.map((d) => ({ deviceId: key(d.runId, d.deviceId) }));
  const covReadings = readings.map((r) => ({ deviceId: key(r.runId, r.deviceId), readPointH: r.readPointH, result: r.result }));
  const covDisp = dispositions.map((x) => ({ deviceId: key(x.runId, x.deviceId), readPointH: x.readPointH, kind: x.kind }));
  return readPointsH.map((h) => {
    const c = readPointCoverage(covDevices, covReadings, covDisp, h);
    const reached = runs.every((r) => readPointReached(r, h));
    return {
      readPointH: h,
      reached,
      expected: c.expected,
      measured: c.measured,
      catastrophic: c.catastrophic,
      disposed: c.disposed,
      deadEarlier: c.deadEarlier,
      unconfirmed: readings.filter((r) => r.readPointH === h && r.conditionsFlag !== null && r.confirmedAt === null).length,
      missing: c.missing.map((k) => {
        const d = byId.get(k)!;
        return { deviceId: d.deviceId, serial: d.serial, lotCode: d.lotCode, runCode: d.runCode };
      }),
      complete: c.complete,
    };
  });
}

/** Everything the verdict needs of one sample (one run, or the runs booked together). */
export async function loadSampleEvidence(m: EntityManager, sampleId: string): Promise<SampleEvidence> {
  const sample = await m.findOneBy(SampleEntity, { id: sampleId });
  if (!sample) throw notFound('The sample');
  const plan = await m.findOneByOrFail(StressPlanEntity, { id: sample.planId });
  const runs = await m.find(RunEntity, { where: { sampleId }, order: { code: 'ASC' } });
  const runIds = runs.map((r) => r.id);
  const rigs: Array<{ id: string; code: string }> = runs.some((r) => r.rigId)
    ? await m.query(`SELECT id, code FROM rigs WHERE id = ANY($1)`, [runs.map((r) => r.rigId).filter(Boolean)])
    : [];
  const rigCode = new Map(rigs.map((g) => [g.id, g.code]));
  const dispositions = await runDispositions(m, runIds);
  const devices = await evidenceDevices(m, runs, dispositions);
  const readings = await evidenceReadings(m, runIds);
  const readPointsH = [...plan.readPointsH].sort((a, b) => a - b);
  const by = sample.deviationById ? await m.findOneBy(UserEntity, { id: sample.deviationById }) : null;
  return {
    sampleId: sample.id,
    planId: plan.id,
    plannedSize: sample.plannedSize,
    bookedSize: sample.bookedSize,
    loadedSize: devices.length,
    deviation: sample.deviationReason ? { reason: sample.deviationReason, byName: by?.name ?? null, at: iso(sample.deviationAt)! } : null,
    runs: runs.map((r) => ({
      id: r.id,
      code: r.code,
      rigCode: r.rigId ? (rigCode.get(r.rigId) ?? null) : null,
      sampleSize: r.sampleSize,
      state: r.state,
      stressHours: r.stressHours,
    })),
    readPointsH,
    devices,
    coverage: coverageOf(runs, readPointsH, devices, readings, dispositions),
    recordDeviations: (await recordDeviationVersions(m, { runIds })).map((v) => ({
      runCode: v.runCode,
      serial: v.serial,
      readPointH: v.readPointH,
      version: v.version,
      kinds: deviationKinds(v.deviation),
      reason: v.reason,
      byName: v.enteredByName,
      at: v.recordedAt.toISOString(),
    })),
  };
}

/** The samples a lot was stressed in (through any of their runs), newest first. */
export async function lotSampleIds(m: EntityManager, lotId: string): Promise<string[]> {
  const rows: Array<{ sample_id: string }> = await m.query(
    `SELECT r.sample_id, max(r.created_at) AS at FROM runs r JOIN run_lots rl ON rl.run_id = r.id
     WHERE rl.lot_id = $1 AND r.sample_id IS NOT NULL GROUP BY r.sample_id ORDER BY at DESC`,
    [lotId],
  );
  return rows.map((r) => r.sample_id);
}

/** Holds the run's row until the transaction ends (one disposition change per run at a time). */
export async function lockRunRow(m: EntityManager, runId: string): Promise<void> {
  await m.query('SELECT 1 FROM runs WHERE id = $1 FOR UPDATE', [runId]);
}
