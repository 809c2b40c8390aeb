/** The measurements module's SQL: read-point counts, serials registered in other lots, the readings upsert. */
import type { EntityManager, QueryDeepPartialEntity } from 'typeorm';
import { DeviceEntity, LotEntity, MeasurementEntity } from '../../db/entities';

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

/** Insert or replace readings per (run, device, read point); `m` is the upload's transaction manager. */
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
      ],
      ['run_id', 'device_id', 'read_point_h'],
    )
    .execute();
}
