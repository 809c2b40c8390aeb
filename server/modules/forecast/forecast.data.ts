/** The forecast alert's rows: the lab's threshold (id 1) and each lot's last side of it; the lots a run holds. */
import type { EntityManager } from 'typeorm';
import { FORECAST_ALERT_DEFAULT } from '../../../shared/forecast/rules';
import { ForecastAlertSettingEntity, ForecastAlertStateEntity, RunLotEntity, UserEntity } from '../../db/entities';

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

export function findAlertState(m: EntityManager, lotId: string): Promise<ForecastAlertStateEntity | null> {
  return m.findOne(ForecastAlertStateEntity, { where: { lotId } });
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
