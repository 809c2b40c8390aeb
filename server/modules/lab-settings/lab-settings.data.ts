/** The lab settings row (id 1) and the name of whoever changed it last. */
import type { EntityManager } from 'typeorm';
import { DEFAULT_HOLD_SETTINGS, type HoldSettings } from '../../../shared/holds/sequence';
import { LabSettingsEntity, UserEntity } from '../../db/entities';

export const LAB_SETTINGS_ID = 1;

/** The row, locked for update when `lock` (inside a transaction). Null only before the migration's seed row. */
export function findLabSettings(m: EntityManager, lock = false): Promise<LabSettingsEntity | null> {
  return m.findOne(LabSettingsEntity, {
    where: { id: LAB_SETTINGS_ID },
    ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}),
  });
}

/** The hold temperatures the scheduler uses (the defaults if the row is missing). */
export async function readHoldSettings(m: EntityManager): Promise<HoldSettings> {
  const row = await findLabSettings(m);
  return row ? { coolUnderBiasToC: row.coolUnderBiasToC, safeToOpenC: row.safeToOpenC } : { ...DEFAULT_HOLD_SETTINGS };
}

export async function saveLabSettings(m: EntityManager, row: LabSettingsEntity): Promise<void> {
  await m.save(LabSettingsEntity, row);
}

export async function userName(m: EntityManager, id: string | null): Promise<string | null> {
  if (!id) return null;
  return (await m.findOneBy(UserEntity, { id }))?.name ?? null;
}
