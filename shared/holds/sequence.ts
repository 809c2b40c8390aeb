/**
 * The read-point hold and end-of-stress sequence, as a pure step the scheduler runs on each pass:
 *
 *   cool-under-bias ──(chamber ≤ coolUnderBiasToC, or nothing biased)──▶ bias-off ──(OPEN_MIN_C ≤ chamber ≤ safeToOpenC)──▶ safe-to-open
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

import { BIASED_HOLD_PHASES, OPEN_MIN_C, type HoldPhase, type HoldSettings } from './words';

export { OPEN_MIN_C };
export {
  HOLD_PHASES,
  BIASED_HOLD_PHASES,
  DEFAULT_HOLD_SETTINGS,
  HOLD_SETTING_LIMITS,
  HOLD_PHASE_LABEL,
  holdPhaseText,
  type HoldPhase,
  type HoldSettings,
} from './words';

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
  const open = i.chamberC !== null && i.chamberC <= i.settings.safeToOpenC && i.chamberC >= OPEN_MIN_C;
  return {
    phase: open ? 'safe-to-open' : 'bias-off',
    chamber: i.ovenNeededHot ? null : { setpointC: coolingSetpointC(i), humidityOff: i.humidityControlled },
    biasOff: true,
  };
}
