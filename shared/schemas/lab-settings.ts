/** The lab's settings API (/api/lab-settings): the read-point hold temperatures (shared/holds). */
import { z } from 'zod';
import { HOLD_SETTING_LIMITS, type HoldSettings } from '../holds/sequence';

const celsius = (label: string, maxC: number) =>
  z
    .number({ error: `${label}: enter a temperature in °C` })
    .finite(`${label}: enter a temperature in °C`)
    .min(
      HOLD_SETTING_LIMITS.minC,
      `${label}: at least ${HOLD_SETTING_LIMITS.minC} °C (the chamber cools towards room ambient and never quite reaches it)`,
    )
    .max(maxC, `${label}: at most ${maxC} °C`);

export const updateLabSettingsSchema = z
  .object({
    coolUnderBiasToC: celsius('Remove bias at', HOLD_SETTING_LIMITS.coolUnderBiasToMaxC).optional(),
    safeToOpenC: celsius('Safe to open at', HOLD_SETTING_LIMITS.safeToOpenMaxC).optional(),
    reason: z.string({ message: 'Say why the setting changes' }).trim().min(3, 'Say why the setting changes').max(200),
  })
  .strict()
  .refine((v) => v.coolUnderBiasToC !== undefined || v.safeToOpenC !== undefined, { message: 'Nothing to change' });
export type UpdateLabSettingsInput = z.infer<typeof updateLabSettingsSchema>;

export interface LabSettings extends HoldSettings {
  updatedAt: string | null;
  updatedByName: string | null;
}
