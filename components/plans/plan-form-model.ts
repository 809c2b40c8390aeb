/**
 * The plan form's model, pure (no React): what the form holds, its defaults (from the shared
 * domain rules), which fields a stress kind shows, validation against the API's own schema, and
 * the conversion to the API body. PlanFormScreen and PlanFormSections only lay it out.
 */
import { numText, parseNum } from '@/components/devices/format';
import {
  DEFAULT_BIAS_TOLERANCE_PCT,
  DEFAULT_DURATION_H,
  DEFAULT_EA_EV,
  DEFAULT_READ_POINTS_H,
  DEFAULT_USE_C,
  REVERSE_BIAS_FRACTION,
} from '@/shared/domain/standards';
import {
  isCyclingKind,
  isHumidityKind,
  isPoweredKind,
  isReverseBiasKind,
  isThermalCyclingKind,
  isUnbiasedKind,
} from '@/shared/domain/stress';
import {
  AC_CONDITIONS,
  TC_DEFAULT_CYCLES,
  TC_DEFAULT_DWELL_MIN,
  TC_DEFAULT_RAMP_K_PER_MIN,
  type AcConditionCode,
} from '@/shared/domain/chamber-methods';
import { tcPeriodH } from '@/shared/chamber/profile';
import { HTRB_SAMPLE, IOL_CYCLES, IOL_DELTA_TJ_C, IOL_OFF_MIN, IOL_ON_MIN } from '@/shared/plan-templates';
import { criteriaSchema, planInputSchema, type PlanInput, type PlanKind } from '@/shared/schemas/plans';

/** Everything the form holds, as typed (strings), in the units people type them in. */
export interface FormState {
  name: string;
  kind: PlanKind | undefined;
  deviceTypeId: string | undefined;
  chamberC: string;
  /** Chamber band in kelvin below / above the stress temperature; both empty = the method's band. */
  bandBelowK: string;
  bandAboveK: string;
  humidityPct: string;
  vcbV: string;
  vebV: string;
  vceV: string;
  biasMode: 'ic' | 'ib';
  ibmA: string;
  icmA: string;
  tolerancePct: string;
  durationH: string;
  readPoints: string;
  sampleSize: string;
  acceptNumber: string;
  hfeChangePct: string;
  leakageMultiple: string;
  leakageFloornA: string;
  vcesatShiftmV: string;
  eaEv: string;
  useC: string;
  deratingPct: string;
  onMin: string;
  offMin: string;
  deltaTjC: string;
  cycles: string;
  /** Temperature cycling: the cold extreme (the hot one is chamberC), dwell, ramp, cycles; read points are then typed in cycles. */
  tcLowC: string;
  tcDwellMin: string;
  tcRampKPerMin: string;
  tcCycles: string;
  /** Autoclave / unbiased HAST condition. */
  acCondition: AcConditionCode;
  notes: string;
}
export type FormKey = keyof FormState;
export type FormErrors = Partial<Record<FormKey, string>>;

const DEFAULT_CRITERIA = criteriaSchema.parse({});

/** A blank plan: the standards' defaults filled in, the plan's own choices (name, part, stress, bias) empty. */
export const EMPTY_FORM: FormState = {
  name: '',
  kind: undefined,
  deviceTypeId: undefined,
  chamberC: '',
  bandBelowK: '',
  bandAboveK: '',
  humidityPct: '',
  vcbV: '',
  vebV: '',
  vceV: '',
  biasMode: 'ic',
  ibmA: '',
  icmA: '',
  tolerancePct: numText(DEFAULT_BIAS_TOLERANCE_PCT),
  durationH: numText(DEFAULT_DURATION_H),
  readPoints: DEFAULT_READ_POINTS_H.join(', '),
  sampleSize: numText(HTRB_SAMPLE.n),
  acceptNumber: numText(HTRB_SAMPLE.c),
  hfeChangePct: numText(DEFAULT_CRITERIA.hfeChangePct),
  leakageMultiple: numText(DEFAULT_CRITERIA.leakageMultiple),
  leakageFloornA: numText(DEFAULT_CRITERIA.leakageFloorA, 1e9),
  vcesatShiftmV: numText(DEFAULT_CRITERIA.vcesatShiftV, 1e3),
  eaEv: numText(DEFAULT_EA_EV),
  useC: numText(DEFAULT_USE_C),
  deratingPct: numText(REVERSE_BIAS_FRACTION, 100),
  onMin: numText(IOL_ON_MIN),
  offMin: numText(IOL_OFF_MIN),
  deltaTjC: numText(IOL_DELTA_TJ_C),
  cycles: numText(IOL_CYCLES),
  tcLowC: '-55',
  tcDwellMin: numText(TC_DEFAULT_DWELL_MIN),
  tcRampKPerMin: numText(TC_DEFAULT_RAMP_K_PER_MIN),
  tcCycles: numText(TC_DEFAULT_CYCLES),
  acCondition: 'autoclave',
  notes: '',
};

/** A blank form, optionally for a chosen part (the "new plan for this part" link). */
export const emptyForm = (deviceTypeId?: string): FormState => ({ ...EMPTY_FORM, deviceTypeId });

/** Which groups of fields the chosen stress shows (and sends). */
export function fieldsFor(kind: PlanKind | undefined): {
  reverse: boolean;
  powered: boolean;
  humidity: boolean;
  cycling: boolean;
  unbiased: boolean;
  thermalCycling: boolean;
  autoclave: boolean;
} {
  return {
    reverse: !!kind && isReverseBiasKind(kind),
    powered: !!kind && isPoweredKind(kind),
    // The autoclave's humidity comes with its condition, not typed.
    humidity: !!kind && isHumidityKind(kind) && kind !== 'ac',
    cycling: !!kind && isCyclingKind(kind),
    unbiased: !!kind && isUnbiasedKind(kind),
    thermalCycling: !!kind && isThermalCyclingKind(kind),
    autoclave: kind === 'ac',
  };
}

/** The form's cycling profile as numbers (undefined where not typed). */
function tcProfile(s: FormState) {
  return {
    lowC: parseNum(s.tcLowC),
    highC: parseNum(s.chamberC),
    dwellMin: parseNum(s.tcDwellMin),
    rampKPerMin: parseNum(s.tcRampKPerMin),
    cycles: parseNum(s.tcCycles),
  };
}
/** Hours of one cycle of the typed profile, or undefined until it is complete and sensible. */
function tcPeriodOf(s: FormState): number | undefined {
  const p = tcProfile(s);
  if (p.lowC === undefined || p.highC === undefined || p.dwellMin === undefined || !(p.rampKPerMin! > 0)) return undefined;
  const h = tcPeriodH({ lowC: p.lowC, highC: p.highC, dwellMin: p.dwellMin, rampKPerMin: p.rampKPerMin! });
  return h > 0 ? h : undefined;
}

export function formFromPlan(p: PlanInput): FormState {
  const tc = p.kind === 'tc' ? p.thermalCycle : null;
  const periodH = tc ? tcPeriodH(tc) : 0;
  return {
    name: p.name,
    kind: p.kind,
    deviceTypeId: p.deviceTypeId,
    chamberC: numText(p.chamberC),
    bandBelowK: numText(p.chamberBand.belowK),
    bandAboveK: numText(p.chamberBand.aboveK),
    humidityPct: numText(p.humidityPct),
    vcbV: numText(p.bias.vcbV),
    vebV: numText(p.bias.vebV),
    vceV: numText(p.bias.vceV),
    biasMode: p.bias.ibA !== null && p.bias.icA === null ? 'ib' : 'ic',
    ibmA: numText(p.bias.ibA, 1e3),
    icmA: numText(p.bias.icA, 1e3),
    tolerancePct: numText(p.bias.tolerancePct),
    durationH: numText(p.durationH),
    // A cycling plan's read points are typed in cycles.
    readPoints: tc ? p.readPointsH.map((h) => Math.round(h / periodH)).join(', ') : p.readPointsH.join(', '),
    sampleSize: numText(p.sampleSize),
    acceptNumber: numText(p.acceptNumber),
    hfeChangePct: numText(p.criteria.hfeChangePct),
    leakageMultiple: numText(p.criteria.leakageMultiple),
    leakageFloornA: numText(p.criteria.leakageFloorA, 1e9),
    vcesatShiftmV: numText(p.criteria.vcesatShiftV, 1e3),
    eaEv: numText(p.eaEv),
    useC: numText(p.useC),
    deratingPct: numText(p.breakdownDerating, 100),
    onMin: numText(p.cycle?.onMin ?? IOL_ON_MIN),
    offMin: numText(p.cycle?.offMin ?? IOL_OFF_MIN),
    deltaTjC: numText(p.cycle?.deltaTjC ?? IOL_DELTA_TJ_C),
    cycles: numText(p.cycle?.cycles ?? IOL_CYCLES),
    tcLowC: numText(tc?.lowC ?? -55),
    tcDwellMin: numText(tc?.dwellMin ?? TC_DEFAULT_DWELL_MIN),
    tcRampKPerMin: numText(tc?.rampKPerMin ?? TC_DEFAULT_RAMP_K_PER_MIN),
    tcCycles: numText(tc?.cycles ?? TC_DEFAULT_CYCLES),
    acCondition: p.acCondition ?? 'autoclave',
    notes: p.notes,
  };
}

/** A template's plan in the form; a new version keeps the name already typed. */
export function formFromTemplate(current: FormState, plan: PlanInput, keepName: boolean): FormState {
  return formFromPlan(keepName ? { ...plan, name: current.name || plan.name } : plan);
}

const scaled = (s: string, k: number) => {
  const n = parseNum(s);
  return n === undefined ? undefined : n * k;
};
const orNull = (s: string, k = 1) => scaled(s, k) ?? null;

/** The form as a plan body for the schema: only the fields that belong to the chosen stress. */
export function rawFromForm(s: FormState): Record<string, unknown> {
  const { reverse, powered, humidity, cycling, thermalCycling, autoclave } = fieldsFor(s.kind);
  const periodH = thermalCycling ? tcPeriodOf(s) : undefined;
  const typed = s.readPoints
    .split(/[\s,;]+/)
    .filter(Boolean)
    .map((x) => parseNum(x));
  // Temperature cycling: read points typed in cycles, kept as the plan's hours (cycles × the profile's period).
  const points = thermalCycling ? typed.map((c) => (c === undefined || periodH === undefined ? undefined : c * periodH)) : typed;
  const tc = tcProfile(s);
  const ac = AC_CONDITIONS[s.acCondition];
  const chamber = autoclave ? { chamberC: ac.chamberC, humidityPct: ac.humidityPct } : null;
  return {
    name: s.name,
    kind: s.kind,
    deviceTypeId: s.deviceTypeId,
    chamberC: chamber ? chamber.chamberC : scaled(s.chamberC, 1),
    chamberBand:
      s.bandBelowK.trim() === '' && s.bandAboveK.trim() === ''
        ? null
        : { belowK: scaled(s.bandBelowK, 1), aboveK: scaled(s.bandAboveK, 1) },
    humidityPct: chamber ? chamber.humidityPct : humidity ? orNull(s.humidityPct) : null,
    bias: {
      vcbV: reverse ? orNull(s.vcbV) : null,
      vebV: reverse ? orNull(s.vebV) : null,
      vceV: powered ? orNull(s.vceV) : null,
      ibA: powered && s.biasMode === 'ib' ? orNull(s.ibmA, 1e-3) : null,
      icA: powered && s.biasMode === 'ic' ? orNull(s.icmA, 1e-3) : null,
      tolerancePct: scaled(s.tolerancePct, 1),
    },
    durationH: thermalCycling
      ? periodH !== undefined && tc.cycles !== undefined
        ? tc.cycles * periodH
        : undefined
      : scaled(s.durationH, 1),
    readPointsH: points,
    sampleSize: scaled(s.sampleSize, 1),
    acceptNumber: scaled(s.acceptNumber, 1),
    criteria: {
      hfeChangePct: scaled(s.hfeChangePct, 1),
      leakageMultiple: scaled(s.leakageMultiple, 1),
      leakageFloorA: scaled(s.leakageFloornA, 1e-9),
      vcesatShiftV: scaled(s.vcesatShiftmV, 1e-3),
    },
    eaEv: scaled(s.eaEv, 1),
    useC: scaled(s.useC, 1),
    cycle: cycling
      ? { onMin: scaled(s.onMin, 1), offMin: scaled(s.offMin, 1), deltaTjC: scaled(s.deltaTjC, 1), cycles: scaled(s.cycles, 1) }
      : null,
    thermalCycle: thermalCycling ? tc : null,
    acCondition: autoclave ? s.acCondition : null,
    breakdownDerating: scaled(s.deratingPct, 0.01),
    notes: s.notes,
  };
}

/** Schema path → the form field that shows it. */
const PATH_TO_FIELD: Record<string, FormKey> = {
  'bias.vcbV': 'vcbV',
  'bias.vebV': 'vebV',
  'bias.vceV': 'vceV',
  'bias.ibA': 'ibmA',
  'bias.icA': 'icmA',
  'bias.tolerancePct': 'tolerancePct',
  'criteria.hfeChangePct': 'hfeChangePct',
  'criteria.leakageMultiple': 'leakageMultiple',
  'criteria.leakageFloorA': 'leakageFloornA',
  'criteria.vcesatShiftV': 'vcesatShiftmV',
  'cycle.onMin': 'onMin',
  'cycle.offMin': 'offMin',
  'cycle.deltaTjC': 'deltaTjC',
  'cycle.cycles': 'cycles',
  'thermalCycle.lowC': 'tcLowC',
  'thermalCycle.highC': 'chamberC',
  'thermalCycle.dwellMin': 'tcDwellMin',
  'thermalCycle.rampKPerMin': 'tcRampKPerMin',
  'thermalCycle.cycles': 'tcCycles',
  thermalCycle: 'tcLowC',
  durationH: 'durationH',
  'chamberBand.belowK': 'bandBelowK',
  'chamberBand.aboveK': 'bandAboveK',
  chamberBand: 'bandAboveK',
  cycle: 'onMin',
  breakdownDerating: 'deratingPct',
  readPointsH: 'readPoints',
};
/** Short names of the fields, for "complete the plan" hints. */
export const FIELD_LABEL: Partial<Record<FormKey, string>> = {
  name: 'Name',
  kind: 'Stress',
  deviceTypeId: 'Device type',
  chamberC: 'Chamber',
  bandBelowK: 'Band below',
  bandAboveK: 'Band above',
  humidityPct: 'Humidity',
  vcbV: 'VCB',
  vebV: 'VEB',
  vceV: 'VCE',
  ibmA: 'IB',
  icmA: 'IC',
  durationH: 'Duration',
  readPoints: 'Read points',
  sampleSize: 'Sample size',
  acceptNumber: 'Accept number',
  onMin: 'Cycle',
  offMin: 'Off time',
  deltaTjC: 'ΔTj',
  cycles: 'Cycles',
  deratingPct: 'Breakdown derating',
  tcLowC: 'Cold extreme',
  tcDwellMin: 'Dwell',
  tcRampKPerMin: 'Ramp',
  tcCycles: 'Cycles',
  acCondition: 'Autoclave condition',
};

export function fieldOf(path: PropertyKey[]): FormKey {
  const full = path.map(String).join('.');
  if (PATH_TO_FIELD[full]) return PATH_TO_FIELD[full];
  if (path[0] === 'readPointsH') return 'readPoints';
  return (PATH_TO_FIELD[String(path[0])] ?? path[0]) as FormKey;
}

/** The plan body when the form is complete and valid, else an error per field (the first for each). */
export function validateForm(s: FormState): { plan: PlanInput | null; errors: FormErrors } {
  const r = planInputSchema.safeParse(rawFromForm(s));
  if (r.success) return { plan: r.data, errors: {} };
  const errors: FormErrors = {};
  for (const i of r.error.issues) {
    const k = fieldOf(i.path);
    if (errors[k]) continue;
    if (k === 'kind') errors[k] = 'Choose the stress';
    else if (k === 'deviceTypeId') errors[k] = 'Choose a device type';
    else if (i.code === 'invalid_type') errors[k] = 'Enter a number';
    else errors[k] = i.message;
  }
  return { plan: null, errors };
}

/** Why the live check cannot run yet, or null when the plan is complete. */
export function incompleteReason(s: FormState, errors: FormErrors): string | null {
  if (!s.deviceTypeId) return 'Choose a device type and a stress to see the check.';
  if (!s.kind) return 'Choose the stress to see the check.';
  const first = Object.entries(errors)[0];
  return first ? `Complete the plan to see the check — ${FIELD_LABEL[first[0] as FormKey] ?? first[0]}: ${first[1]}.` : null;
}

/** The API's field errors (paths such as "bias.vcbV") on the form's fields, first message each. */
export function serverFieldErrors(fields: Record<string, string[]>): FormErrors {
  const next: FormErrors = {};
  for (const [path, msgs] of Object.entries(fields)) next[fieldOf(path.split('.'))] ??= msgs[0];
  return next;
}

/** The highest bias voltage the plan puts on a socket (for the safety caution), 0 when none. */
export const maxBiasV = (s: FormState): number => Math.max(parseNum(s.vcbV) ?? 0, parseNum(s.vceV) ?? 0) || 0;
