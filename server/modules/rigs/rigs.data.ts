/** The rigs module's query-builder SQL, apart from the rules in rigs.service.ts. */
import type { EntityManager } from 'typeorm';
import { RigMaintenanceEntity } from '../../db/entities';

/** A maintenance window of the rig that overlaps [startsAt, endsAt), if any. */
export function overlappingMaintenance(
  m: EntityManager,
  rigId: string,
  startsAt: Date,
  endsAt: Date,
): Promise<RigMaintenanceEntity | null> {
  return m
    .createQueryBuilder(RigMaintenanceEntity, 'w')
    .where('w.rig_id = :rigId AND w.starts_at < :endsAt AND w.ends_at > :startsAt', { rigId, startsAt, endsAt })
    .getOne();
}
