/** The alarms module's SQL (raw and query-builder), apart from the rules in alarms.service.ts. */
import type { EntityManager } from 'typeorm';
import type { AlarmListQuery, AlarmSeverityName } from '../../../shared/schemas/alarms';
import { AlarmEntity } from '../../db/entities';

/** Serialises raises and clears of one dedupe key, across processes, until the transaction ends. */
export async function lockAlarmKey(m: EntityManager, key: string): Promise<void> {
  await m.query('SELECT pg_advisory_xact_lock(hashtext($1))', [`alarm:${key}`]);
}

/** One page of alarms: open before acknowledged, critical before warning before info, newest first; and the total. */
export async function alarmPage(m: EntityManager, q: AlarmListQuery): Promise<[AlarmEntity[], number]> {
  const qb = m.getRepository(AlarmEntity).createQueryBuilder('a');
  if (q.status === 'open') qb.andWhere('a.acknowledged_at IS NULL');
  if (q.status === 'acknowledged') qb.andWhere('a.acknowledged_at IS NOT NULL');
  if (q.rigId) qb.andWhere('a.rig_id = :rigId', { rigId: q.rigId });
  if (q.runId) qb.andWhere('a.run_id = :runId', { runId: q.runId });
  if (q.severity) qb.andWhere('a.severity = :severity', { severity: q.severity });
  if (q.kind) qb.andWhere('a.kind = :kind', { kind: q.kind });
  qb.addSelect('(CASE WHEN a.acknowledged_at IS NULL THEN 0 ELSE 1 END)', 'ack_rank')
    .addSelect(`(CASE a.severity WHEN 'critical' THEN 0 WHEN 'warning' THEN 1 ELSE 2 END)`, 'sev_rank')
    .orderBy('ack_rank', 'ASC')
    .addOrderBy('sev_rank', 'ASC')
    .addOrderBy('a.raised_at', 'DESC')
    .offset(q.offset)
    .limit(q.limit);
  return Promise.all([qb.getMany(), qb.clone().offset(undefined).limit(undefined).getCount()]);
}

/** Unacknowledged alarms counted per rig, severity and whether the condition still holds. */
export function openAlarmCounts(
  m: EntityManager,
): Promise<Array<{ rig_id: string | null; severity: AlarmSeverityName; active: boolean; n: number }>> {
  return m.query(
    `SELECT rig_id, severity, (cleared_at IS NULL) AS active, count(*)::int AS n
       FROM alarms WHERE acknowledged_at IS NULL GROUP BY rig_id, severity, (cleared_at IS NULL)`,
  );
}
