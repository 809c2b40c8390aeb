/**
 * The forecast alert's rows: the lab's threshold (id 1), each engineer's own level, each lot's last
 * side of the lab's level and of each engineer's; the lots a run holds.
 */
import type { EntityManager } from 'typeorm';
import { FORECAST_ALERT_DEFAULT } from '../../../shared/forecast/rules';
import type { Role } from '../../../shared/roles';
import {
  ForecastAlertLevelEntity,
  ForecastAlertSettingEntity,
  ForecastAlertStateEntity,
  ForecastAlertUserStateEntity,
  RunLotEntity,
  UserEntity,
} from '../../db/entities';

export const FORECAST_ALERT_ID = 1;

export async function findAlertSetting(m: EntityManager, lock = false): Promise<ForecastAlertSettingEntity> {
  const row = await m.findOne(ForecastAlertSettingEntity, {
    where: { id: FORECAST_ALERT_ID },
    ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}),
  });
  return (
    row ??
    Object.assign(new ForecastAlertSettingEntity(), {
      id: FORECAST_ALERT_ID,
      below: FORECAST_ALERT_DEFAULT,
      updatedAt: null,
      updatedById: null,
    })
  );
}

export async function saveAlertSetting(m: EntityManager, row: ForecastAlertSettingEntity): Promise<void> {
  await m.save(ForecastAlertSettingEntity, row);
}

export async function saveAlertState(m: EntityManager, row: ForecastAlertStateEntity): Promise<void> {
  await m.save(ForecastAlertStateEntity, row);
}

export async function lotIdsOfRun(m: EntityManager, runId: string): Promise<string[]> {
  return (await m.find(RunLotEntity, { where: { runId } })).map((r) => r.lotId);
}

export async function userName(m: EntityManager, id: string | null): Promise<string | null> {
  if (!id) return null;
  return (await m.findOneBy(UserEntity, { id }))?.name ?? null;
}

export function findOwnLevel(m: EntityManager, userId: string, lock = false): Promise<ForecastAlertLevelEntity | null> {
  return m.findOne(ForecastAlertLevelEntity, { where: { userId }, ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}) });
}

export async function saveOwnLevel(m: EntityManager, userId: string, below: number | null, at: Date): Promise<void> {
  await m.upsert(ForecastAlertLevelEntity, { userId, below, updatedAt: at }, ['userId']);
}

export async function deleteOwnLevel(m: EntityManager, userId: string): Promise<void> {
  await m.delete(ForecastAlertLevelEntity, { userId });
}

export async function notifyReadPointsOf(m: EntityManager, userId: string): Promise<boolean> {
  return (await m.findOneBy(UserEntity, { id: userId }))?.notifyReadPoints ?? false;
}

/** Active users of the roles told, with their own level if they set one (`own_set`, `below` null = off). */
export function alertRecipients(
  m: EntityManager,
  roles: readonly Role[],
): Promise<Array<{ id: string; notifyReadPoints: boolean; ownSet: boolean; below: number | null }>> {
  return m.query(
    `SELECT u.id, u.notify_read_points AS "notifyReadPoints", l.user_id IS NOT NULL AS "ownSet", l.below
       FROM users u LEFT JOIN forecast_alert_levels l ON l.user_id = u.id
      WHERE u.active AND u.role = ANY($1::text[])
      ORDER BY u.id`,
    [roles],
  );
}

/**
 * Locks the lot's alert state row (made when missing): concurrent uploads of one lot's readings
 * take turns, so a crossing is told once per engineer.
 */
export async function lockLotAlertState(m: EntityManager, lotId: string, at: Date): Promise<ForecastAlertStateEntity> {
  await m
    .createQueryBuilder()
    .insert()
    .into(ForecastAlertStateEntity)
    .values({ lotId, below: false, pPass: null, changedAt: at })
    .orIgnore()
    .execute();
  return m.findOneOrFail(ForecastAlertStateEntity, { where: { lotId }, lock: { mode: 'pessimistic_write' } });
}

export function findUserStates(m: EntityManager, lotId: string): Promise<ForecastAlertUserStateEntity[]> {
  return m.find(ForecastAlertUserStateEntity, { where: { lotId } });
}

export async function saveUserStates(m: EntityManager, rows: ForecastAlertUserStateEntity[]): Promise<void> {
  if (rows.length) await m.save(ForecastAlertUserStateEntity, rows);
}
