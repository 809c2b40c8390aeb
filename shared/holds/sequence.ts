/**
 * The read-point hold and end-of-stress sequence, as a pure step the scheduler runs on each pass:
 *
 *   cool-under-bias ──(chamber ≤ coolUnderBiasToC, or nothing biased)──▶ bias-off ──(chamber ≤ safeToOpenC)──▶ safe-to-open
 *        ▲   │
 *        │   └─(another run in the oven needs it hot)──▶ oven-shared (bias stays on, chamber left hot; waits)
 *        └────────────────────(the oven is free again)──────┘
 *
 * Bias stays on while the chamber cools, so leakage-related damage does not relax before the
 * devices are measured [pub: MIL-M-38510/757C §4.5.2 — cool to within 10 °C of the room-temperature
 * power-stable state before removing bias] [memory — confirm clause: MIL-STD-750 methods 1038/1039
 * and JESD22-A108 describe cooling under bias; wording not checked].
 *
 * Humidity (THB): humidity control goes off first while the chamber stays at its test temperature,
 * and the set point then steps down no lower than the dew point plus a margin, so the dry bulb stays
 * above the dew point throughout [pub: JESD22-A101D §2.1 — chamber controlled in ramp-down, dry bulb
 * above wet bulb throughout]. A chamber approaches a lower set point from above, and with humidity
 * control off the moisture only leaves, so dry bulb ≥ set point ≥ dew point + margin holds.
 *
 * Shared oven: when another run in the same chamber still needs it hot, the hold waits with bias on
 * at the chamber's temperature ("oven-shared") instead of removing bias hot. Hours are not credited
 * while the hold waits (the run is out of 'stressing'), so credited stress is a lower bound of the
 * stress applied — conservative for a failure rate. The wait ends when the other run no longer
 * needs the heat (its own hold, pause, end or abort).
 */
import { ROOM_AMBIENT_C } from '../domain/standards';
import { dewPointC } from './dew-point';

export const HOLD_PHASES = ['cool-under-bias', 'oven-shared', 'bias-off', 'safe-to-open'] as const;
export type HoldPhase = (typeof HOLD_PHASES)[number];
/** Phases in which the run's devices are still biased: measurements cannot be taken yet. */
export const BIASED_HOLD_PHASES: readonly HoldPhase[] = ['cool-under-bias', 'oven-shared'];

/** The lab's hold settings (admin-editable, stored in lab_settings). */
export interface HoldSettings {
  /** Bias comes off once the chamber is at or below this, °C. */
  coolUnderBiasToC: number;
  /** The chamber may be opened at or below this, °C. */
  safeToOpenC: number;
}

/**
 * Defaults: bias off at room ambient + 10 °C [pub: MIL-M-38510/757C §4.5.2 — within 10 °C of the
 * room-temperature power-stable state]; safe to open at 40 °C [practice; the lab sets its own].
 */
export const DEFAULT_HOLD_SETTINGS: HoldSettings = { coolUnderBiasToC: ROOM_AMBIENT_C + 10, safeToOpenC: 40 };

/**
 * Bounds an admin may set. The chamber cools towards room ambient and never quite reaches it, so
 * both must sit above it; safe-to-open above 60 °C is refused [practice: hot surfaces burn].
 */
export const HOLD_SETTING_LIMITS = {
  minC: ROOM_AMBIENT_C + 1,
  coolUnderBiasToMaxC: 100,
  safeToOpenMaxC: 60,
} as const;

/** Dry bulb kept at least this far above the dew point during a humidity ramp-down, K [practice]. */
export const DEW_POINT_MARGIN_K = 3;
/** The humidity ramp-down's set point moves in steps of this many kelvin (one command per step) [Emberlot's choice]. */
export const HUMID_RAMP_STEP_K = 5;

export interface HoldInput {
  /** The stored phase; null when the hold has just begun. */
  phase: HoldPhase | null;
  /** The rig's latest chamber reading and relative humidity (null: none or not measured). */
  chamberC: number | null;
  humidityPct: number | null;
  /** Does any of the run's sockets still report bias on? */
  anyBiased: boolean;
  /** Does another run in the oven need it hot? */
  ovenNeededHot: boolean;
  /** The plan's chamber temperature and whether the plan controls humidity. */
  planChamberC: number;
  humidityControlled: boolean;
  settings: HoldSettings;
}

export interface HoldDecision {
  phase: HoldPhase;
  /** The chamber command wanted now; null leaves the chamber to the run that needs it hot. */
  chamber: { setpointC: number; humidityOff: boolean } | null;
  /** Bias off wanted now. */
  biasOff: boolean;
}

/**
 * The set point a cooling chamber may be given now: room ambient, or for a humidity plan the dew
 * point of the latest reading plus the margin, rounded up to a ramp step and never above the plan's
 * temperature.
 */
export function coolingSetpointC(i: Pick<HoldInput, 'chamberC' | 'humidityPct' | 'humidityControlled' | 'planChamberC'>): number {
  if (!i.humidityControlled) return ROOM_AMBIENT_C;
  // No reading yet: hold the test temperature until one says where the dew point is.
  if (i.chamberC === null || i.humidityPct === null) return i.planChamberC;
  if (!(i.humidityPct > 0)) return ROOM_AMBIENT_C;
  const floor = dewPointC(i.chamberC, i.humidityPct) + DEW_POINT_MARGIN_K;
  const stepped = Math.ceil(floor / HUMID_RAMP_STEP_K - 1e-9) * HUMID_RAMP_STEP_K;
  return Math.min(Math.max(i.planChamberC, ROOM_AMBIENT_C), Math.max(ROOM_AMBIENT_C, stepped));
}

/** One step of the hold: the phase it is in now, the chamber command and whether bias comes off. */
export function holdStep(i: HoldInput): HoldDecision {
  const biased = BIASED_HOLD_PHASES.includes(i.phase ?? 'cool-under-bias') && i.anyBiased;
  if (biased && i.ovenNeededHot) return { phase: 'oven-shared', chamber: null, biasOff: false };
  if (biased && !(i.chamberC !== null && i.chamberC <= i.settings.coolUnderBiasToC)) {
    return { phase: 'cool-under-bias', chamber: { setpointC: coolingSetpointC(i), humidityOff: i.humidityControlled }, biasOff: false };
  }
  // Bias comes off now (or is off already): cool on to safe-to-open unless the oven is kept hot.
  const open = i.chamberC !== null && i.chamberC <= i.settings.safeToOpenC;
  return {
    phase: open ? 'safe-to-open' : 'bias-off',
    chamber: i.ovenNeededHot ? null : { setpointC: coolingSetpointC(i), humidityOff: i.humidityControlled },
    biasOff: true,
  };
}

const c0 = (c: number) => `${Math.round(c)} °C`;

/** Short names of the hold's steps (rig chart marks, audit trail). */
export const HOLD_PHASE_LABEL: Record<HoldPhase, string> = {
  'cool-under-bias': 'Cooling under bias',
  'oven-shared': 'Held under bias (oven shared)',
  'bias-off': 'Bias off',
  'safe-to-open': 'Safe to open',
};

/** The operator's words for a hold phase (run page, floor). */
export function holdPhaseText(phase: HoldPhase, s: HoldSettings, chamberC: number | null): string {
  const now = chamberC === null ? '' : ` (chamber ${c0(chamberC)})`;
  switch (phase) {
    case 'cool-under-bias':
      return `Cooling under bias to ${c0(s.coolUnderBiasToC)}${now}: bias comes off there, so leakage damage cannot relax before the measurements.`;
    case 'oven-shared':
      return `Held under bias${now}: another run in this oven still needs it hot. Cooling waits until that run reaches a hold or ends; hours are not credited meanwhile.`;
    case 'bias-off':
      return `Bias off; cooling to ${c0(s.safeToOpenC)}, the lab's safe-to-open temperature${now}.`;
    case 'safe-to-open':
      return `At or below ${c0(s.safeToOpenC)}, the lab's safe-to-open temperature${now}.`;
  }
}
