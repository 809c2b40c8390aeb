/** Pure scheduling: constraint checks, the booking heuristic and the stress-hour accrual rule. */
export * from './constraints';
export * from './heuristic';
export * from './accrual';
export * from './cycling';
export * from './lateness';
export * from './sharing';
export * from './tardiness';
export * from './chamber';

import type { Bias } from '../schemas/plans';
import { DEFAULT_BIAS_TOLERANCE_PCT, type ChamberBandK } from '../domain/standards';
import { isCyclingKind, isPoweredKind, isReverseBiasKind, type PlanKind } from '../domain/stress';
import type { AccrualConditions } from './accrual';
import { planCycleCommand, type PlanCycle } from './cycling';

type PlanLike = { kind: PlanKind; bias: Bias };
type BiasSettings = { vV?: number; iA?: number; icA?: number; cycle?: { onS: number; offS: number; deltaTjC: number } };

/** The bias voltage a run applies (and the rig must supply): VCB under reverse bias, VCE when powered. */
export function planBiasV(plan: PlanLike): number | null {
  const v = isReverseBiasKind(plan.kind) ? plan.bias.vcbV : plan.bias.vceV;
  return v === null || v === undefined ? null : v;
}

/**
 * What a plan's bias command sets besides on/off: the voltage (planBiasV), and for powered kinds
 * either the forced base current (`iA` = IB) or the collector current the rig regulates (`icA`).
 * The plan check judged a plan on that choice (a regulated IC cannot run away through the gain),
 * so the rig must get the same one. Reverse-bias kinds send no current: the rig keeps its supply's
 * current limit.
 */
export function planBiasSettings(plan: PlanLike & { cycle?: PlanCycle | null }): BiasSettings {
  const out: BiasSettings = {};
  const v = planBiasV(plan);
  if (v !== null) out.vV = v;
  if (isPoweredKind(plan.kind)) {
    if (plan.bias.icA !== null && plan.bias.icA !== undefined) out.icA = plan.bias.icA;
    else if (plan.bias.ibA !== null && plan.bias.ibA !== undefined) out.iA = plan.bias.ibA;
  }
  // A cycling plan's on/off timing and swing go with every bias-on (shared/scheduling/cycling.ts).
  const cycle = planCycleCommand({ kind: plan.kind, cycle: plan.cycle ?? null });
  if (cycle) out.cycle = cycle;
  return out;
}

/** Accrual conditions of a plan version. */
export function accrualConditionsFor(
  plan: PlanLike & { chamberC: number; humidityPct: number | null; chamberBand: ChamberBandK },
): AccrualConditions {
  return {
    setC: plan.chamberC,
    band: plan.chamberBand,
    humidityPct: plan.humidityPct,
    // A cycling socket's supply is off half of each cycle by design: its bias counts while the
    // cycling program runs (biasOn), and the swing it reports is the stress evidence (cycling.ts).
    biasV: isCyclingKind(plan.kind) ? null : planBiasV(plan),
    biasTolerancePct: plan.bias.tolerancePct ?? DEFAULT_BIAS_TOLERANCE_PCT,
    runNeedsBiasedSocket: !isCyclingKind(plan.kind),
  };
}
