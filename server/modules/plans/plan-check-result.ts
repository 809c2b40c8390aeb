import { ACTIVE_REGION_MIN_VCE_V, KELVIN_OFFSET, SOLVER_CEILING_C, SOLVER_SCAN_STEP_C } from '../../../shared/physics';
import {
  BVCEO_TO_BVCBO_RULE_OF_THUMB,
  checkPlan,
  ICBO_REF_C,
  LEAKAGE_DOUBLING_C,
  LOOP_GAIN_BLOCK,
  LOOP_GAIN_WARN,
  RUNAWAY_MARGIN_WARN_C,
  WARN_FRACTION_OF_LIMIT,
} from '../../../shared/safety/plan-check';
import type { DeviceTypeInput } from '../../../shared/schemas/devices';
import type { CheckStatus, PlanCheckResult, PlanInput } from '../../../shared/schemas/plans';

/** The thresholds and physical constants the plan check uses, stored beside every result. */
export const PLAN_CHECK_CONSTANTS: Record<string, number> = {
  warnFractionOfLimit: WARN_FRACTION_OF_LIMIT,
  loopGainWarn: LOOP_GAIN_WARN,
  loopGainBlock: LOOP_GAIN_BLOCK,
  runawayMarginWarnC: RUNAWAY_MARGIN_WARN_C,
  icboRefC: ICBO_REF_C,
  leakageDoublingC: LEAKAGE_DOUBLING_C,
  bvceoToBvcboRuleOfThumb: BVCEO_TO_BVCBO_RULE_OF_THUMB,
  kelvinOffset: KELVIN_OFFSET,
  activeRegionMinVceV: ACTIVE_REGION_MIN_VCE_V,
  solverCeilingC: SOLVER_CEILING_C,
  solverScanStepC: SOLVER_SCAN_STEP_C,
};

export function checkStatusOf(findings: Array<{ severity: string }>): Exclude<CheckStatus, 'none'> {
  if (findings.some((f) => f.severity === 'block')) return 'block';
  if (findings.some((f) => f.severity === 'warn')) return 'warn';
  return 'ok';
}

/** Runs the plan check and packages it with the constants, the plan's derating and the ratings it used. */
export function runPlanCheck(device: DeviceTypeInput & { id: string }, plan: PlanInput, at: Date): PlanCheckResult {
  const { id, ...ratings } = device;
  const r = checkPlan(ratings, plan);
  return {
    blocking: r.blocking,
    status: checkStatusOf(r.findings),
    findings: r.findings.map((f) => ({ ...f, order: Object.keys(f.numbers) })),
    derived: { ...r.derived },
    constants: { ...PLAN_CHECK_CONSTANTS, breakdownDerating: plan.breakdownDerating },
    device: { id, partNumber: device.partNumber, ratings },
    checkedAt: at.toISOString(),
  };
}
