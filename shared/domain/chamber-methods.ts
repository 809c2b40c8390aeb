/**
 * The unbiased chamber stresses' conditions — declared once (STYLE.md "One rule, one place"), each
 * with its source: [pub: …] published, [practice] common practice, [memory] recalled, not checked
 * against the text (the engineer confirms against the lab's copy of the standard).
 *
 * tc   temperature cycling, air-to-air (JESD22-A104): two extremes, a dwell at each, a ramp; counted in cycles.
 * htsl high-temperature storage life (JESD22-A103): an unbiased bake; hours.
 * ac   autoclave (JESD22-A102) or unbiased HAST (JESD22-A118): saturated / unsaturated steam under pressure; hours.
 */
import type { ChamberBandK } from './standards';

/** One temperature-cycling condition: the load's extremes (°C). */
export interface TcCondition {
  code: string;
  lowC: number;
  highC: number;
}
/**
 * JESD22-A104 test conditions [memory: the table's letters and extremes as recalled — confirm:
 * A −55/+85, B −55/+125, C −65/+150, G −40/+125, H −55/+150, J 0/+100, K 0/+125, N −40/+85].
 */
export const TC_CONDITIONS: readonly TcCondition[] = [
  { code: 'A', lowC: -55, highC: 85 },
  { code: 'B', lowC: -55, highC: 125 },
  { code: 'C', lowC: -65, highC: 150 },
  { code: 'G', lowC: -40, highC: 125 },
  { code: 'H', lowC: -55, highC: 150 },
  { code: 'J', lowC: 0, highC: 100 },
  { code: 'K', lowC: 0, highC: 125 },
  { code: 'N', lowC: -40, highC: 85 },
];
/** The cold extreme's band: the load must reach it and may undershoot by up to 10 K (+0/−10) [memory: JESD22-A104 Ts(min) +0/−10 °C]. */
export const TC_COLD_BAND_K: Readonly<ChamberBandK> = { belowK: 10, aboveK: 0 };
/** Shortest dwell (soak) at each extreme [memory: JESD22-A104 soak mode 1, ≥ 1 min; modes of 5, 10, 15 min also]. */
export const TC_MIN_DWELL_MIN = 1;
/** Default dwell [practice: 10 min at each extreme]. */
export const TC_DEFAULT_DWELL_MIN = 10;
/** Default air ramp rate between the extremes [practice: single-zone chambers ramp 10–15 K/min; memory: JESD22-A104 limits the load to ≤ 15 K/min]. */
export const TC_DEFAULT_RAMP_K_PER_MIN = 10;
/** Fastest ramp a plan may ask of the load [memory: JESD22-A104, 15 °C/min for the sample — confirm]. */
export const TC_MAX_RAMP_K_PER_MIN = 15;
/** Cycles of the standards' qualification [pub: AEC-Q101 test table, TC 1000 cycles; memory: JESD47 700 cycles at condition C]. */
export const TC_DEFAULT_CYCLES = 1000;
/** Read points of a TC run (cycles) [practice: 0 / 250 / 500 / 1000 cycles]. */
export const TC_DEFAULT_READ_POINTS_CYCLES: readonly number[] = [0, 250, 500, 1000];

/** High-temperature storage [pub: JESD22-A103D Table 1 conditions A–D 125/150/175/200 °C, −0/+10 °C; AEC-Q101 1000 h]. */
export const HTSL_CONDITIONS_C: readonly number[] = [125, 150, 175, 200];
export const HTSL_DEFAULT_C = 150;
export const HTSL_DEFAULT_H = 1000;

export type AcConditionCode = 'autoclave' | 'uhast-130' | 'uhast-110';
export interface AcCondition {
  code: AcConditionCode;
  label: string;
  chamberC: number;
  humidityPct: number;
  /** Absolute vessel pressure (kPa). */
  pressureKPa: number;
  durationH: number;
  source: string;
}
/**
 * Autoclave and unbiased HAST conditions. Every figure here is recalled, not checked against the text:
 * JESD22-A102 121 °C / 100 % RH / 205 kPa (≈ 2 atm) for 96 h (AEC-Q101 uses 96 h); JESD22-A118
 * 130 °C / 85 % RH / 230 kPa or 110 °C / 85 % RH / 122 kPa for 96 h / 264 h.
 */
export const AC_CONDITIONS: Readonly<Record<AcConditionCode, AcCondition>> = {
  autoclave: {
    code: 'autoclave',
    label: 'Autoclave 121 °C / 100 % RH / 205 kPa',
    chamberC: 121,
    humidityPct: 100,
    pressureKPa: 205,
    durationH: 96,
    source: 'JESD22-A102 (from memory)',
  },
  'uhast-130': {
    code: 'uhast-130',
    label: 'Unbiased HAST 130 °C / 85 % RH / 230 kPa',
    chamberC: 130,
    humidityPct: 85,
    pressureKPa: 230,
    durationH: 96,
    source: 'JESD22-A118 (from memory)',
  },
  'uhast-110': {
    code: 'uhast-110',
    label: 'Unbiased HAST 110 °C / 85 % RH / 122 kPa',
    chamberC: 110,
    humidityPct: 85,
    pressureKPa: 122,
    durationH: 264,
    source: 'JESD22-A118 (from memory)',
  },
};
export const AC_CONDITION_CODES = Object.keys(AC_CONDITIONS) as AcConditionCode[];
/** Read points of an autoclave / uHAST run (hours) [practice: 0 / 48 / 96 h]. */
export const AC_DEFAULT_READ_POINTS_H: readonly number[] = [0, 48, 96];

/**
 * A chamber's door is opened for a read point only with the load back near room temperature: at or
 * below the lab's safe-to-open temperature (hand-safe; lab settings) and at or above this, so no
 * moisture condenses on devices taken out of a cold chamber [practice: bring a cold load to room first].
 */
export const CHAMBER_OPEN_ABOVE_C = 15;

/** Safety words shown beside the unbiased kinds (the screens and the plan check use these). */
export const CHAMBER_CAUTION: Readonly<Record<'tc' | 'htsl' | 'ac', string>> = {
  tc:
    'Temperature-cycling chambers have hot and frozen surfaces and move between them in minutes: wear the lab’s gloves, ' +
    'open the door only at a read point once the load is near room temperature. A software alarm is no substitute for the ' +
    'chamber’s own over- and under-temperature protection; follow the lab’s safety rules and local codes.',
  htsl:
    'A storage oven at 150 °C and above burns on contact and keeps its heat long after it is switched off. A software alarm is ' +
    'no substitute for the oven’s own over-temperature cut-out; follow the lab’s safety rules and local codes.',
  ac:
    'An autoclave is a pressure vessel full of steam above 100 °C: never open it under pressure, let it vent and cool first, ' +
    'and use only a vessel inspected under the local pressure-equipment rules. A software alarm is no substitute for the ' +
    'vessel’s own safety valve and over-temperature protection; follow the lab’s safety rules and local codes.',
};

/** Where a chamber's programme stands (the floor's words); the type lives with the floor schema. */
export type ChamberStepName = 'to-hot' | 'hot' | 'to-cold' | 'cold' | 'to-soak' | 'soak' | 'to-room' | 'idle';
export const CHAMBER_STEP_LABEL: Readonly<Record<ChamberStepName, string>> = {
  'to-hot': 'Ramp to the hot extreme',
  hot: 'Dwell at the hot extreme',
  'to-cold': 'Ramp to the cold extreme',
  cold: 'Dwell at the cold extreme',
  'to-soak': 'Coming up to the stress temperature',
  soak: 'Soak at the stress temperature',
  'to-room': 'Back to room temperature',
  idle: 'Idle',
};
const TC_PHASES = ['to-hot', 'hot', 'to-cold', 'cold'] as const;

/**
 * The step of a chamber's programme from its run: a cycling run's counter phase (the server counts
 * from the load, shared/chamber/profile.ts), a storage / autoclave run heating or soaking, a hold or
 * the end bringing the chamber back to room; idle without a run under way.
 */
export function chamberStepOf(run: { state: string; planKind: string | null; tcPhase: string | null } | null): ChamberStepName {
  if (!run) return 'idle';
  if (['read-hold', 'cooling', 'paused', 'fault'].includes(run.state)) return 'to-room';
  if (run.state !== 'heating' && run.state !== 'stressing') return 'idle';
  if (run.planKind === 'tc') return TC_PHASES.find((p) => p === run.tcPhase) ?? 'to-hot';
  return run.state === 'heating' ? 'to-soak' : 'soak';
}
