/**
 * The measurements module's SQL: read-point counts, serials registered in other lots, the readings
 * upsert, a reading's versions, the kept upload files, and the lot-wide reads (current readings,
 * corrections, record deviations) that evidence, analytics and sign-off call.
 */
import type { EntityManager, QueryDeepPartialEntity } from 'typeorm';
import type { ReadingValues } from '../../../shared/domain/measurement-columns';
import { DeviceEntity, LotEntity, MeasurementEntity } from '../../db/entities';
import type { MeasurementResult } from '../../../shared/evidence';

/** Readings stored per read point of a run: how many, and how many of them late. */
export function readPointCounts(m: EntityManager, runId: string): Promise<Array<{ h: number; n: number; late: number }>> {
  return m.query(
    `SELECT read_point_h AS h, count(*)::int AS n, count(*) FILTER (WHERE late)::int AS late FROM measurements WHERE run_id = $1 GROUP BY read_point_h`,
    [runId],
  );
}

/** Devices (any lot) whose serial, lower-cased, is one of these lower-cased serials, with their lot's code. */
export function lotCodesOfSerials(m: EntityManager, lowerSerials: string[]): Promise<Array<{ serial: string; code: string }>> {
  return m
    .createQueryBuilder(DeviceEntity, 'd')
    .innerJoin(LotEntity, 'l', 'l.id = d.lotId')
    .select('d.serial', 'serial')
    .addSelect('l.code', 'code')
    .where('lower(d.serial) IN (:...s)', { s: lowerSerials })
    .getRawMany();
}

/**
 * Insert or replace readings per (run, device, read point); `m` is the upload's transaction manager.
 * A replaced value becomes a new version through the table's triggers (migration 1817000000000):
 * the earlier one stays in measurement_versions.
 */
export async function upsertMeasurements(m: EntityManager, values: Array<QueryDeepPartialEntity<MeasurementEntity>>): Promise<void> {
  await m
    .createQueryBuilder()
    .insert()
    .into(MeasurementEntity)
    .values(values)
    .orUpdate(
      [
        'result',
        'hfe',
        'hfe_ic_a',
        'hfe_vce_v',
        'icbo_a',
        'icbo_vcb_v',
        'vcesat_v',
        'bvceo_v',
        'measured_c',
        'measured_at',
        'late',
        'upload_id',
        'entered_by_id',
        'change_reason',
        'deviation',
        'conditions_flag',
        'confirmed_at',
        'confirmed_by_id',
        'confirm_reason',
      ],
      ['run_id', 'device_id', 'read_point_h'],
    )
    .execute();
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- node-pg rows are untyped; the fields are read and converted one by one
type SqlRow = Record<string, any>;
const n = (v: unknown) => (v === null || v === undefined ? null : Number(v));

/** One version of one reading, as the history and the exports show it. */
export interface ReadingVersionRow extends ReadingValues {
  measurementId: string;
  runId: string;
  runCode: string;
  deviceId: string;
  serial: string;
  lotCode: string;
  readPointH: number;
  version: number;
  /** The version `measurements` holds now (the current one). */
  currentVersion: number;
  result: MeasurementResult;
  measuredC: number;
  measuredAt: Date;
  late: boolean;
  uploadId: string | null;
  fileName: string | null;
  enteredByName: string | null;
  reason: string | null;
  deviation: string | null;
  recordedAt: Date;
}

const VERSION_SELECT = `SELECT v.measurement_id, v.run_id, r.code AS run_code, v.device_id, d.serial, l.code AS lot_code, v.read_point_h, v.version,
       x.version AS current_version, v.result, v.hfe, v.hfe_ic_a, v.hfe_vce_v, v.icbo_a, v.icbo_vcb_v, v.vcesat_v, v.bvceo_v,
       v.measured_c, v.measured_at, v.late, v.upload_id, up.file_name, u.name AS entered_by_name, v.reason, v.deviation, v.recorded_at
  FROM measurement_versions v
  JOIN measurements x ON x.id = v.measurement_id
  JOIN runs r ON r.id = v.run_id
  JOIN devices d ON d.id = v.device_id
  JOIN lots l ON l.id = d.lot_id
  LEFT JOIN users u ON u.id = v.entered_by_id
  LEFT JOIN measurement_uploads up ON up.id = v.upload_id`;

function versionRow(r: SqlRow): ReadingVersionRow {
  return {
    measurementId: r.measurement_id,
    runId: r.run_id,
    runCode: r.run_code,
    deviceId: r.device_id,
    serial: r.serial,
    lotCode: r.lot_code,
    readPointH: Number(r.read_point_h),
    version: Number(r.version),
    currentVersion: Number(r.current_version),
    result: r.result,
    hfe: n(r.hfe),
    hfeIcA: n(r.hfe_ic_a),
    hfeVceV: n(r.hfe_vce_v),
    icboA: n(r.icbo_a),
    icboVcbV: n(r.icbo_vcb_v),
    vcesatV: n(r.vcesat_v),
    bvceoV: n(r.bvceo_v),
    measuredC: Number(r.measured_c),
    measuredAt: new Date(r.measured_at),
    late: Boolean(r.late),
    uploadId: r.upload_id ?? null,
    fileName: r.file_name ?? null,
    enteredByName: r.entered_by_name ?? null,
    reason: r.reason ?? null,
    deviation: r.deviation ?? null,
    recordedAt: new Date(r.recorded_at),
  };
}

/** Every version of one device's readings in one run, by read point then version. */
export async function deviceVersions(m: EntityManager, runId: string, deviceId: string): Promise<ReadingVersionRow[]> {
  const rows: SqlRow[] = await m.query(`${VERSION_SELECT} WHERE v.run_id = $1 AND v.device_id = $2 ORDER BY v.read_point_h, v.version`, [
    runId,
    deviceId,
  ]);
  return rows.map(versionRow);
}

/** Every version of the readings that were corrected (more than one version) of a lot's devices, for the exports. */
export async function lotCorrectedVersions(m: EntityManager, lotId: string): Promise<ReadingVersionRow[]> {
  const rows: SqlRow[] = await m.query(
    `${VERSION_SELECT} WHERE d.lot_id = $1 AND x.version > 1 ORDER BY r.code, d.serial, v.read_point_h, v.version`,
    [lotId],
  );
  return rows.map(versionRow);
}

/**
 * The versions that recorded a deviation (time zero after Start, a finished run changed, a failure
 * withdrawn), of these runs or of one lot's devices, oldest first.
 */
export async function recordDeviationVersions(
  m: EntityManager,
  of: { runIds: string[] } | { lotId: string },
): Promise<ReadingVersionRow[]> {
  if ('runIds' in of && !of.runIds.length) return [];
  const where = 'runIds' in of ? 'v.run_id = ANY($1::uuid[])' : 'd.lot_id = $1';
  const rows: SqlRow[] = await m.query(`${VERSION_SELECT} WHERE ${where} AND v.deviation IS NOT NULL ORDER BY v.recorded_at`, [
    'runIds' in of ? of.runIds : of.lotId,
  ]);
  return rows.map(versionRow);
}

/** One current reading of a lot's device (the latest version only). */
export interface CurrentLotReading extends ReadingValues {
  measurementId: string;
  runId: string;
  deviceId: string;
  readPointH: number;
  version: number;
  result: MeasurementResult;
  measuredC: number;
  measuredAt: string;
  late: boolean;
  conditionsFlag: string | null;
  confirmedAt: string | null;
}

/**
 * The current readings of a lot: every (run, device, read point) of the lot's devices, latest
 * version only, in a stable order (run, device, read point). The one read a signature's data hash
 * should cover; `measurements` holds nothing but the latest versions.
 */
export async function currentLotReadings(m: EntityManager, lotId: string): Promise<CurrentLotReading[]> {
  const rows: SqlRow[] = await m.query(
    `SELECT x.id, x.run_id, x.device_id, x.read_point_h, x.version, x.result, x.hfe, x.hfe_ic_a, x.hfe_vce_v, x.icbo_a, x.icbo_vcb_v,
            x.vcesat_v, x.bvceo_v, x.measured_c, x.measured_at, x.late, x.conditions_flag, x.confirmed_at
       FROM measurements x JOIN devices d ON d.id = x.device_id
      WHERE d.lot_id = $1 ORDER BY x.run_id, x.device_id, x.read_point_h`,
    [lotId],
  );
  return rows.map((r) => ({
    measurementId: r.id,
    runId: r.run_id,
    deviceId: r.device_id,
    readPointH: Number(r.read_point_h),
    version: Number(r.version),
    result: r.result,
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
  }));
}

/** Keeps a file's bytes once per SHA-256 (a second upload of the same bytes stores nothing new). */
export async function keepFile(m: EntityManager, sha256: string, content: Buffer): Promise<void> {
  await m.query(`INSERT INTO measurement_files (sha256, content, size_bytes) VALUES ($1, $2, $3) ON CONFLICT (sha256) DO NOTHING`, [
    sha256,
    content,
    content.length,
  ]);
}

/** An upload's record with its kept bytes (content null when the upload predates keeping files). */
export async function uploadWithFile(
  m: EntityManager,
  uploadId: string,
): Promise<{ runId: string; fileName: string; fileSha256: string; content: Buffer | null } | null> {
  const rows: SqlRow[] = await m.query(
    `SELECT up.run_id, up.file_name, up.file_sha256, f.content FROM measurement_uploads up
       LEFT JOIN measurement_files f ON f.sha256 = up.file_sha256 WHERE up.id = $1`,
    [uploadId],
  );
  const r = rows[0];
  return r ? { runId: r.run_id, fileName: r.file_name, fileSha256: r.file_sha256, content: r.content ?? null } : null;
}

/** A run's uploads, newest first, with who sent them and whether the bytes are kept. */
export async function runUploads(m: EntityManager, runId: string): Promise<SqlRow[]> {
  return m.query(
    `SELECT up.id, up.read_point_h, up.file_name, up.file_sha256, up.rows_total, up.rows_stored, up.rows_rejected, up.created_at,
            u.name AS uploaded_by_name, f.size_bytes
       FROM measurement_uploads up LEFT JOIN users u ON u.id = up.uploaded_by_id
       LEFT JOIN measurement_files f ON f.sha256 = up.file_sha256
      WHERE up.run_id = $1 ORDER BY up.created_at DESC`,
    [runId],
  );
}
