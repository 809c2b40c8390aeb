/** Types and thresholds of the plan check (shared/safety/plan-check.ts); each rule module reads them. */
import type { DeviceTypeInput } from '../../schemas/devices';
import type { PlanInput } from '../../schemas/plans';

/**
 * A current, power or voltage at or above this fraction of its limit (a rating, or a derived limit)
 * is a warning. Temperatures are never judged as a fraction of a Celsius value (90 % of 150 °C
 * means nothing physical): they use margins in kelvin (JUNCTION_WARN_MARGIN_K).
 */
export const WARN_FRACTION_OF_LIMIT = 0.9;
/**
 * A predicted powered junction (or a cycling peak) less than this many kelvin below Tj max warns:
 * the spread of θja and gain across a lot moves the junction by a few kelvin (Emberlot's choice;
 * the powered templates aim exactly this far below the rating).
 */
export const JUNCTION_WARN_MARGIN_K = 5;
/** Loop gain θ·∂P/∂Tj at or above this warns (half-way to runaway). */
export const LOOP_GAIN_WARN = 0.5;
/** Loop gain at or above this blocks: no stable operating point (textbook stability criterion). */
export const LOOP_GAIN_BLOCK = 1;
/** Critical ambient less than this many °C above the chamber warns. */
export const RUNAWAY_MARGIN_WARN_C = 25;
/** Reference temperature of the device's ICBO figure (schema: "at 25 °C"). */
export const ICBO_REF_C = 25;
/** Leakage doubling step (common practice). */
export const LEAKAGE_DOUBLING_C = 10;
/** Trade rule of thumb: collector-emitter breakdown is often about half the collector-base figure. */
export const BVCEO_TO_BVCBO_RULE_OF_THUMB = 0.5;

export type Severity = 'block' | 'warn' | 'ok';

export interface FindingNumber {
  value: number;
  unit: string;
  label: string;
}

export interface Finding {
  code: string;
  severity: Severity;
  title: string;
  explanation: string;
  numbers: Record<string, FindingNumber>;
  /**
   * True when no approval may override this blocking finding: reverse bias beyond the rated
   * breakdown itself (BVCBO, BVEBO) puts every part into avalanche (Emberlot's safety policy).
   */
  neverOverride?: boolean;
}

/** Whether a blocking finding may be overridden with a second person's approval (the flag set by its rule). */
export const isOverridable = (f: { severity: string; neverOverride?: boolean }): boolean =>
  f.severity === 'block' && f.neverOverride !== true;

export interface PlanDerived {
  allowedVcbV: number | null;
  bvceoV: number | null;
  /** 1 when BVCEO was estimated from BVCBO and gain, 0 when rated, null when not needed. */
  bvceoEstimated: number | null;
  allowedVceV: number | null;
  betaAtChamber: number;
  icA: number | null;
  powerW: number | null;
  deratedPowerLimitW: number;
  /** Predicted steady junction temperature; null when there is no steady state (runaway) or power is unknown. */
  tjC: number | null;
  loopGain: number | null;
  criticalAmbientC: number | null;
  runawayMarginC: number | null;
  leakageAtTjA: number | null;
  /** °C per leakage doubling the leakage rule used (two-point law from the hot point, else the common-practice step). */
  leakageDoublingC: number | null;
  /** Allowed collector current at the plan's VCE and case temperature (forward SOA), powered bipolar plans. */
  soaAllowedIcA: number | null;
}

export interface PlanCheck {
  blocking: boolean;
  findings: Finding[];
  derived: PlanDerived;
}

/**
 * What the rules share while one plan is checked. Rules run in table order; a rule may fill
 * `derived` (and `powered`) for the rules after it — the operating point feeds the current,
 * dissipation and junction rules.
 */
export interface CheckContext {
  device: DeviceTypeInput;
  plan: PlanInput;
  /** The plan's stress temperature (the minimum of its band). */
  chamber: number;
  /** Top of the plan's chamber band: the hottest ambient the plan accepts. */
  chamberTop: number;
  derating: number;
  betaAtChamber: number;
  derived: PlanDerived;
  /** Set by the powered operating-point rule: IB forced by the rig, and no steady state found. */
  powered: { forcedIb: boolean; runaway: boolean };
}

/** One rule of the plan check: the findings it makes (none when it does not apply). */
export type PlanRule = (c: CheckContext) => Finding[];
