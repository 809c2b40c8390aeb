/**
 * The lab's settings: the temperatures the read-point hold and the end of stress use (shared/holds).
 * Everyone signed in reads them (operators see them on the run page); admins change them, with a
 * reason, audited as lab-settings.update with the values before and after.
 */
import { DEFAULT_HOLD_SETTINGS } from '../../../shared/holds/sequence';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { LabSettings, UpdateLabSettingsInput } from '../../../shared/schemas/lab-settings';
import type { AppContext } from '../../context';
import { LabSettingsEntity } from '../../db/entities';
import { LAB_SETTINGS_ID, findLabSettings, saveLabSettings, userName } from './lab-settings.data';

export class LabSettingsService {
  constructor(private readonly ctx: AppContext) {}

  async get(): Promise<LabSettings> {
    const m = this.ctx.ds.manager;
    const row = await findLabSettings(m);
    if (!row) return { ...DEFAULT_HOLD_SETTINGS, updatedAt: null, updatedByName: null };
    return {
      coolUnderBiasToC: row.coolUnderBiasToC,
      safeToOpenC: row.safeToOpenC,
      updatedAt: row.updatedAt ? row.updatedAt.toISOString() : null,
      updatedByName: await userName(m, row.updatedById),
    };
  }

  async update(actor: SessionUser, input: UpdateLabSettingsInput): Promise<LabSettings> {
    await this.ctx.ds.transaction(async (m) => {
      const row =
        (await findLabSettings(m, true)) ?? Object.assign(new LabSettingsEntity(), { id: LAB_SETTINGS_ID, ...DEFAULT_HOLD_SETTINGS });
      const before = { coolUnderBiasToC: row.coolUnderBiasToC, safeToOpenC: row.safeToOpenC };
      const after = {
        coolUnderBiasToC: input.coolUnderBiasToC ?? row.coolUnderBiasToC,
        safeToOpenC: input.safeToOpenC ?? row.safeToOpenC,
      };
      Object.assign(row, after, { updatedAt: this.ctx.now(), updatedById: actor.id });
      await saveLabSettings(m, row);
      await this.ctx.audit.record(
        { actor, action: 'lab-settings.update', entity: 'lab-settings', entityId: null, reason: input.reason, details: { before, after } },
        m,
      );
    });
    return this.get();
  }
}
