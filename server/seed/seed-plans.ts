/**
 * Demo stress plans for the Harrowgate lab: one per stress kind, built from the templates for a
 * demo part, one plan with two versions (to show version history), and one unsafe draft whose
 * forced base current runs away thermally, so the plan check has something to refuse.
 */
import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { buildPlanTemplates } from '../../shared/plan-templates';
import { planInputSchema, type PlanInput, type PlanKind } from '../../shared/schemas/plans';
import { DeviceTypeEntity, StressPlanEntity, UserEntity } from '../db/entities';
import { toDeviceTypeInput } from '../modules/device-types/device-types.service';
import { runPlanCheck } from '../modules/plans/plan-check-result';

export function fromTemplate(d: DeviceTypeEntity, kind: PlanKind, patch: Partial<PlanInput> = {}): PlanInput {
  const t = buildPlanTemplates({ id: d.id, ...toDeviceTypeInput(d) }).find((x) => x.kind === kind)!;
  return planInputSchema.parse({ ...t.plan!, ...patch });
}

/** The demo plans, each a list of versions (oldest first). */
export function demoPlans(types: Map<string, DeviceTypeEntity>): PlanInput[][] {
  const t = (pn: string) => {
    const d = types.get(pn);
    if (!d) throw new Error(`seed-plans: demo device type ${pn} is missing`);
    return d;
  };
  const n140 = t('HPD-2N140');
  const htrbV2 = fromTemplate(n140, 'htrb');
  const htrbV1 = {
    ...htrbV2,
    name: 'HTRB 140 °C, 80 % VCBO, 1000 h (JESD22-A108)',
    chamberC: 140,
    notes: 'First draft at 140 °C; raised to Tj max (the method’s stress temperature, band +5/−0 K) in version 2.',
  };
  return [
    [htrbV1, htrbV2],
    [fromTemplate(t('HPD-3P90'), 'hotl')],
    [fromTemplate(t('HPD-7N400'), 'thb')],
    [fromTemplate(t('HPD-S230'), 'iol')],
    // The chamber kinds of QUAL-001 (AEC-Q101 TC and AC) and a storage bake, for the demo's chambers TC-01 and AC-01.
    [fromTemplate(n140, 'tc')],
    [fromTemplate(n140, 'ac')],
    [fromTemplate(n140, 'htsl')],
    [
      planInputSchema.parse({
        name: 'DRAFT powered life, forced IB 0.6 mA, 85 °C chamber',
        kind: 'hotl',
        deviceTypeId: n140.id,
        chamberC: 85,
        humidityPct: null,
        bias: { vcbV: null, vebV: null, vceV: 30, ibA: 0.0006, icA: null, tolerancePct: 5 },
        durationH: 1000,
        readPointsH: [0, 168, 500, 1000],
        sampleSize: 45,
        acceptNumber: 0,
        criteria: {},
        notes:
          'Unsafe draft kept for the demo: the rig would force the base current, and with the gain rising with ' +
          'temperature the dissipation feeds itself. The plan check refuses it; regulate IC instead.',
      }),
    ],
  ];
}

export async function seedPlans(ds: DataSource): Promise<void> {
  const engineer = await ds.getRepository(UserEntity).findOne({ where: { role: 'engineer' }, order: { createdAt: 'ASC' } });
  const types = new Map((await ds.getRepository(DeviceTypeEntity).find()).map((d) => [d.partNumber, d]));
  const at = new Date();
  for (const versions of demoPlans(types)) {
    const planKey = randomUUID();
    for (let i = 0; i < versions.length; i++) {
      const p = versions[i];
      const d = [...types.values()].find((x) => x.id === p.deviceTypeId)!;
      // Older versions a few days back, so the history reads in order.
      const createdAt = new Date(at.getTime() - (versions.length - 1 - i) * 3 * 86_400_000);
      // save, not insert: insert's typing cannot take the check result's `unknown` ratings.
      await ds.getRepository(StressPlanEntity).save({
        ...p,
        cycle: p.cycle ?? null,
        planKey,
        version: i + 1,
        current: i === versions.length - 1,
        checkResult: runPlanCheck({ id: d.id, ...toDeviceTypeInput(d) }, p, createdAt),
        createdById: engineer?.id ?? null,
        createdAt,
      });
    }
  }
}
