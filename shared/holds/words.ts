/**
 * The hold's phases, the lab's hold settings and their words — a module of their own so the screens
 * (run page, rig chart, rigs page) share it without the hold's sequence (shared/holds/sequence.ts).
 */
import { ROOM_AMBIENT_C } from '../domain/standards';

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

const c0 = (c: number) => `${Math.round(c)} °C`;
/**
 * A chamber colder than this is not called safe to open: parts below the room's dew point gather
 * condensation before they are measured. 15 °C is the lower end of the standard atmospheric conditions
 * for measurements and tests (IEC 60068-1: 15–35 °C, from memory). A cycling chamber caught at its cold
 * extreme at a read point is brought back to room first.
 */
export const OPEN_MIN_C = 15;

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
      if (chamberC !== null && chamberC < OPEN_MIN_C) {
        return `Bias off; warming to ${c0(OPEN_MIN_C)} before the chamber is opened: cold parts gather condensation${now}.`;
      }
      return `Bias off; cooling to ${c0(s.safeToOpenC)}, the lab's safe-to-open temperature${now}.`;
    case 'safe-to-open':
      return `At or below ${c0(s.safeToOpenC)}, the lab's safe-to-open temperature${now}.`;
  }
}
