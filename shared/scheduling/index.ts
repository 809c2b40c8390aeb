/** Pure scheduling: constraint checks, the booking heuristic and the stress-hour accrual rule. */
export * from './constraints';
export * from './heuristic';
export * from './accrual';

import type { Bias, PlanKind } from '../schemas/plans';
import type { AccrualConditions } from './accrual';

type PlanLike = { kind: PlanKind; bias: Bias };

/** The bias voltage a run applies (and the rig must supply): VCB under reverse bias, VCE when powered. */
export function planBiasV(plan: PlanLike): number | null {
  const v = plan.kind === 'htrb' || plan.kind === 'thb' ? plan.bias.vcbV : plan.bias.vceV;
  return v === null || v === undefined ? null : v;
}

/** Accrual conditions of a plan version. */
export function accrualConditionsFor(plan: PlanLike & { chamberC: number; humidityPct: number | null }): AccrualConditions {
  return {
    setC: plan.chamberC,
    humidityPct: plan.humidityPct,
    biasV: planBiasV(plan),
    biasTolerancePct: plan.bias.tolerancePct ?? 5,
    runNeedsBiasedSocket: plan.kind !== 'iol',
  };
}
