import { z } from 'zod';
import { num } from './devices';

import {
  PLAN_KINDS,
  isCyclingKind,
  isHumidityKind,
  isPoweredKind,
  isReverseBiasKind,
  isThermalCyclingKind,
  isUnbiasedKind,
  type PlanKind,
} from '../domain/stress';
import { AC_CONDITIONS, AC_CONDITION_CODES, TC_MAX_RAMP_K_PER_MIN, TC_MIN_DWELL_MIN } from '../domain/chamber-methods';
import {
  CHAMBER_BAND_MAX_K,
  DEFAULT_BIAS_TOLERANCE_PCT,
  METHOD_CHAMBER_BAND_K,
  DEFAULT_EA_EV,
  DEFAULT_READ_POINTS_H,
  DEFAULT_USE_C,
  REVERSE_BIAS_FRACTION,
} from '../domain/standards';

export { PLAN_KINDS, type PlanKind } from '../domain/stress';
export { PLAN_KIND_LABEL } from '../domain/stress';

/** Bias applied to each device. Reverse-bias kinds use vcbV (and optionally vebV); powered kinds use vceV with ibA or icA. */
export const biasSchema = z.object({
  /** Collector-base reverse voltage (magnitude, V) — htrb / thb. */
  vcbV: num().min(0).max(10000).nullable().default(null),
  /** Emitter-base reverse voltage (magnitude, V); 0 or null when the emitter is shorted/open. */
  vebV: num().min(0).max(1000).nullable().default(null),
  /** Collector-emitter voltage (V) — hotl / iol. */
  vceV: num().min(0).max(10000).nullable().default(null),
  /** Base current forced (A) — hotl / iol when the rig forces IB. */
  ibA: num().min(0).max(100).nullable().default(null),
  /** Collector current regulated (A) — hotl / iol when the rig regulates IC. */
  icA: num().min(0).max(1000).nullable().default(null),
  /** Bias tolerance band for hour accrual, ± percent of set. */
  tolerancePct: num().min(0.5).max(20).default(DEFAULT_BIAS_TOLERANCE_PCT),
});
export type Bias = z.infer<typeof biasSchema>;

/**
 * Absolute end-point limits per parameter, as the data sheet states them, with the test
 * conditions they hold at (a reading is compared only when measured at those conditions).
 * Each limit is optional; null = not limited.
 */
export const endPointLimitsSchema = z.object({
  hfeMin: num().positive().max(100000).nullable().default(null),
  hfeMax: num().positive().max(100000).nullable().default(null),
  icboMaxA: num().positive().max(1).nullable().default(null),
  vcesatMaxV: num().positive().max(100).nullable().default(null),
  bvceoMinV: num().positive().max(10000).nullable().default(null),
  /** Stated test conditions of the limits. */
  atC: num().min(-65).max(300).default(25),
  hfeIcA: num().positive().max(1000).nullable().default(null),
  hfeVceV: num().positive().max(10000).nullable().default(null),
  icboVcbV: num().positive().max(10000).nullable().default(null),
});
export type EndPointLimits = z.infer<typeof endPointLimitsSchema>;

export const criteriaSchema = z.object({
  /** hFE may change by at most this many percent of its time-zero value (MIL-PRF-19500 deltas: ±15 %). */
  hfeChangePct: num().positive().max(100).default(15),
  /** ICBO may grow to at most this multiple of time zero … */
  leakageMultiple: num().min(1).max(1000).default(2),
  /** … or this absolute floor (A), whichever is greater (MIL-PRF-19500: 200 nA). */
  leakageFloorA: num().min(0).max(1).default(200e-9),
  /** VCE(sat) may shift by at most this many volts (MIL-PRF-19500: 50 mV). */
  vcesatShiftV: num().positive().max(10).default(0.05),
  /** Absolute end-point limits (the data sheet's, at stated test conditions); absent = deltas only. */
  limits: endPointLimitsSchema.optional(),
});
export type Criteria = z.infer<typeof criteriaSchema>;

export const cycleSchema = z.object({
  onMin: num().positive().max(600),
  offMin: num().positive().max(600),
  deltaTjC: num().positive().max(300),
  cycles: z.number().int().positive().max(1_000_000),
});

/**
 * Temperature cycling (tc, JESD22-A104): the load's extremes, the dwell at each, the air's ramp and
 * the cycle target. The plan's chamberC is the hot extreme (highC); its band is the hot extreme's.
 */
export const thermalCycleSchema = z.object({
  lowC: num().min(-80).max(50),
  highC: num().min(25).max(300),
  dwellMin: num().min(TC_MIN_DWELL_MIN, `A dwell of at least ${TC_MIN_DWELL_MIN} min (JESD22-A104 soak mode 1, from memory)`).max(240),
  rampKPerMin: num()
    .positive()
    .max(TC_MAX_RAMP_K_PER_MIN, `At most ${TC_MAX_RAMP_K_PER_MIN} K/min (JESD22-A104 limit for the load, from memory)`),
  cycles: z.number().int().positive().max(100_000),
});
export type ThermalCycle = z.infer<typeof thermalCycleSchema>;

/** The chamber band in kelvin below and above the stated stress temperature (see METHOD_CHAMBER_BAND_K). */
export const chamberBandSchema = z.object({
  belowK: num().min(0, 'A band cannot be negative').max(CHAMBER_BAND_MAX_K, `At most ${CHAMBER_BAND_MAX_K} K`),
  aboveK: num().min(0, 'A band cannot be negative').max(CHAMBER_BAND_MAX_K, `At most ${CHAMBER_BAND_MAX_K} K`),
});

export const planInputSchema = z
  .object({
    name: z.string().trim().min(1, 'Name the plan').max(120),
    kind: z.enum(PLAN_KINDS),
    deviceTypeId: z.string().uuid('Choose a device type'),
    chamberC: num().min(-65).max(300),
    /** Band around chamberC in kelvin; absent or null = the method's band for the kind. */
    chamberBand: chamberBandSchema.nullable().default(null),
    humidityPct: num().min(0).max(100).nullable().default(null),
    bias: biasSchema,
    durationH: num().positive().max(100000),
    readPointsH: z
      .array(num().min(0).max(100000))
      .min(1, 'Give at least one read point')
      .max(20)
      .default(() => [...DEFAULT_READ_POINTS_H]),
    sampleSize: z.number().int().positive().max(10000),
    acceptNumber: z.number().int().min(0).max(1000),
    criteria: criteriaSchema,
    eaEv: num().min(0.1).max(2).default(DEFAULT_EA_EV),
    useC: num().min(-55).max(200).default(DEFAULT_USE_C),
    cycle: cycleSchema.nullable().default(null),
    /** Temperature cycling only: extremes, dwell, ramp, cycles. */
    thermalCycle: thermalCycleSchema.nullable().default(null),
    /** Autoclave / unbiased HAST only: which condition (shared/domain/chamber-methods.ts AC_CONDITIONS). */
    acCondition: z.enum(AC_CONDITION_CODES).nullable().default(null),
    /** Derating applied to breakdown ratings in the plan check (fraction of rated, e.g. 0.8). */
    breakdownDerating: num().min(0.1).max(1).default(REVERSE_BIAS_FRACTION),
    notes: z.string().trim().max(2000).default(''),
  })
  .superRefine((p, ctx) => {
    const sorted = [...p.readPointsH].sort((a, b) => a - b);
    if (sorted.some((h, i) => i > 0 && h === sorted[i - 1])) {
      ctx.addIssue({ code: 'custom', path: ['readPointsH'], message: 'Read points must be different hours' });
    }
    if (sorted[sorted.length - 1] > p.durationH) {
      ctx.addIssue({ code: 'custom', path: ['readPointsH'], message: 'A read point lies after the end of the run' });
    }
    if (p.acceptNumber >= p.sampleSize) {
      ctx.addIssue({ code: 'custom', path: ['acceptNumber'], message: 'Accept number must be below the sample size' });
    }
    if (isReverseBiasKind(p.kind) && (p.bias.vcbV === null || p.bias.vcbV <= 0)) {
      ctx.addIssue({ code: 'custom', path: ['bias', 'vcbV'], message: 'Reverse-bias plans need a collector-base voltage' });
    }
    if (isPoweredKind(p.kind) && (p.bias.vceV === null || (p.bias.ibA === null && p.bias.icA === null))) {
      ctx.addIssue({ code: 'custom', path: ['bias', 'vceV'], message: 'Powered plans need VCE and either IB or IC' });
    }
    if (isHumidityKind(p.kind) && p.humidityPct === null) {
      ctx.addIssue({ code: 'custom', path: ['humidityPct'], message: 'Humidity plans need a relative humidity' });
    }
    if (isCyclingKind(p.kind) && p.cycle === null) {
      ctx.addIssue({ code: 'custom', path: ['cycle'], message: 'Intermittent plans need on/off times' });
    }
    unbiasedIssues(p).forEach((i) => ctx.addIssue({ code: 'custom', path: i.path, message: i.message }));
    if (p.chamberBand && p.chamberBand.belowK + p.chamberBand.aboveK <= 0) {
      ctx.addIssue({
        code: 'custom',
        path: ['chamberBand', 'aboveK'],
        message: 'The chamber band needs some width (no chamber holds a temperature exactly)',
      });
    }
  })
  .transform((p) => ({ ...p, chamberBand: p.chamberBand ?? { ...METHOD_CHAMBER_BAND_K[p.kind] } }));
/**
 * The unbiased chamber kinds' own rules: no bias at all; tc needs its profile with the hot extreme as
 * the stress temperature; ac needs its condition, whose temperature and humidity the plan states.
 */
function unbiasedIssues(p: {
  kind: PlanKind;
  chamberC: number;
  humidityPct: number | null;
  bias: { vcbV: number | null; vebV: number | null; vceV: number | null; ibA: number | null; icA: number | null };
  cycle: unknown;
  thermalCycle: ThermalCycle | null;
  acCondition: keyof typeof AC_CONDITIONS | null;
}): Array<{ path: (string | number)[]; message: string }> {
  const out: Array<{ path: (string | number)[]; message: string }> = [];
  if (!isUnbiasedKind(p.kind)) {
    if (p.thermalCycle !== null) out.push({ path: ['thermalCycle'], message: 'Only temperature-cycling plans have a chamber cycle' });
    if (p.acCondition !== null) out.push({ path: ['acCondition'], message: 'Only autoclave plans have an autoclave condition' });
    return out;
  }
  const b = p.bias;
  const applied = (['vcbV', 'vebV', 'vceV', 'ibA', 'icA'] as const).find((k) => b[k] !== null && b[k] !== 0);
  if (applied) out.push({ path: ['bias', applied], message: 'A chamber stress applies no bias: leave the bias empty' });
  if (p.cycle !== null) out.push({ path: ['cycle'], message: 'A chamber stress has no power cycling' });
  if (isThermalCyclingKind(p.kind)) {
    const tc = p.thermalCycle;
    if (!tc) out.push({ path: ['thermalCycle'], message: 'Temperature cycling needs its extremes, dwell, ramp and cycles' });
    else {
      if (tc.highC - tc.lowC < 20)
        out.push({ path: ['thermalCycle', 'highC'], message: 'The hot extreme must be at least 20 K above the cold one' });
      if (p.chamberC !== tc.highC) {
        out.push({ path: ['chamberC'], message: `The stress temperature of a cycling plan is its hot extreme (${tc.highC} °C)` });
      }
    }
  } else if (p.thermalCycle !== null) {
    out.push({ path: ['thermalCycle'], message: 'Only temperature-cycling plans have a chamber cycle' });
  }
  if (p.kind === 'ac') {
    const c = p.acCondition ? AC_CONDITIONS[p.acCondition] : null;
    if (!c) out.push({ path: ['acCondition'], message: 'Choose the autoclave or unbiased-HAST condition' });
    else {
      if (p.chamberC !== c.chamberC) out.push({ path: ['chamberC'], message: `${c.label}: the chamber is at ${c.chamberC} °C` });
      if (p.humidityPct !== c.humidityPct)
        out.push({ path: ['humidityPct'], message: `${c.label}: the humidity is ${c.humidityPct} % RH` });
    }
  } else if (p.acCondition !== null) {
    out.push({ path: ['acCondition'], message: 'Only autoclave plans have an autoclave condition' });
  }
  if (p.kind === 'htsl' && p.humidityPct !== null)
    out.push({ path: ['humidityPct'], message: 'A storage bake is dry: leave the humidity empty' });
  return out;
}

/** A plan as the server keeps it: the band resolved (the method's when the body gave none). */
export type PlanInput = z.infer<typeof planInputSchema>;
/** A plan body as sent (the band may be left out). */
export type PlanBody = z.input<typeof planInputSchema>;

// ---------------------------------------------------------------------------------------------
// API shapes for /api/plans (requests beyond the plan body itself, and responses)

export const planListQuerySchema = z.object({
  kind: z.enum(PLAN_KINDS).optional(),
  deviceTypeId: z.string().uuid('Not a valid device type id').optional(),
});

export const planTemplatesQuerySchema = z.object({
  deviceTypeId: z.string().uuid('Not a valid device type id').optional(),
});

/** Worst severity of a stored check; 'none' when no check was stored. */
export type CheckStatus = 'block' | 'warn' | 'ok' | 'none';

export interface CheckFindingNumber {
  value: number;
  unit: string;
  label: string;
}
export interface CheckFinding {
  code: string;
  severity: 'block' | 'warn' | 'ok';
  title: string;
  explanation: string;
  numbers: Record<string, CheckFindingNumber>;
  /** The keys of `numbers` in the order the check gave them (a jsonb column does not keep key order). */
  order?: string[];
  /** A blocking finding no approval may override (shared/safety/plan-rules/types.ts). */
  neverOverride?: boolean;
}

/**
 * A plan check as the API returns it and as a plan version stores it: the findings, the derived
 * numbers, the thresholds and physical constants the check used, and the device ratings it was
 * run against (a later edit of the device type does not rewrite what a version was checked with).
 */
export interface PlanCheckResult {
  blocking: boolean;
  status: Exclude<CheckStatus, 'none'>;
  findings: CheckFinding[];
  derived: Record<string, number | null>;
  constants: Record<string, number>;
  device: { id: string; partNumber: string; ratings: Record<string, unknown> };
  checkedAt: string;
}

export interface PlanDeviceRef {
  id: string;
  partNumber: string;
  kind: string;
  polarity: string;
}

/** One version of a plan. */
export interface Plan extends PlanInput {
  id: string;
  planKey: string;
  version: number;
  current: boolean;
  device: PlanDeviceRef;
  checkStatus: CheckStatus;
  checkResult: PlanCheckResult | null;
  createdAt: string;
  createdBy: { id: string; name: string } | null;
}

/** A row of the plan list (the current version of each plan). */
export interface PlanSummary {
  id: string;
  planKey: string;
  version: number;
  name: string;
  kind: PlanKind;
  device: PlanDeviceRef;
  chamberC: number;
  humidityPct: number | null;
  bias: Bias;
  durationH: number;
  sampleSize: number;
  acceptNumber: number;
  checkStatus: CheckStatus;
  blockCount: number;
  warnCount: number;
  createdAt: string;
}

export interface PlanVersionRef {
  id: string;
  version: number;
  current: boolean;
  name: string;
  checkStatus: CheckStatus;
  createdAt: string;
  createdByName: string | null;
}

export interface PlanDetail extends Plan {
  /** Every version of this plan, newest first. */
  versions: PlanVersionRef[];
}

/** A rule a template applied, with where it comes from (tagged as in the reference methods). */
export interface TemplateRule {
  label: string;
  value: string;
  source: string;
}

export interface PlanTemplate {
  key: string;
  kind: PlanKind;
  title: string;
  summary: string;
  /** The published or practice sources the template follows, as tagged strings. */
  sources: string[];
  /** The rules with the numbers they gave for the chosen device type. */
  rules: TemplateRule[];
  /** A complete plan body for the chosen device type; null when no device type was given. */
  plan: PlanInput | null;
}
