/**
 * Plan check: a stress plan against the device's ratings before anything is powered.
 * Pure; every finding carries its numbers so the UI can show what was checked and why.
 * The check is a table of small rules (shared/safety/plan-rules/), run in order; each returns its
 * findings, and the operating point found by one rule feeds the rules after it.
 *
 * First-estimate assumptions (stated in the findings too):
 * - Case temperature ≈ chamber temperature for the θjc dissipation limit (the case cannot be cooler
 *   than the chamber in a convection oven; a heatsinked rig runs the case hotter, so this is optimistic
 *   only by the case-to-chamber rise).
 * - Junction temperature and the runaway loop use θja from chamber ambient (device in free air in the
 *   chamber; conservative for a heatsinked rig, which has a lower junction-to-ambient resistance).
 * - Leakage from the device's hot-leakage point (ICBO at a stated T and VCB) by the two-point law
 *   when given (shared/physics hotPointLeakage), else the 25 °C figure doubling every 10 °C (common practice).
 * - Temperatures are judged by margins in kelvin and against the plan's chamber band, never as a
 *   percentage of a Celsius value; a reverse-bias stress at Tj max (the method's condition) is not a warning.
 */
import type { DeviceTypeInput } from '../schemas/devices';
import type { PlanInput } from '../schemas/plans';
import { deratedPowerLimit, gainAtTemperature } from '../physics';
import { junctionTemperature } from './plan-rules/junction';
import { activeRegion, cyclePeakJunction, dissipation, icVsIcMax, operatingPoint } from './plan-rules/powered';
import { cyclingProfile, storageRating } from './plan-rules/chamber';
import { chamberVsTjMax, vcbVsBvcbo, vceVsBvceo, vebVsBvebo } from './plan-rules/ratings';
import { leakageSelfHeating } from './plan-rules/reverse-bias';
import { forwardSoa } from './plan-rules/soa';
import type { CheckContext, PlanCheck, PlanRule } from './plan-rules/types';

export * from './plan-rules/types';

/** The rules in the order their findings are listed. */
export const PLAN_RULES: readonly PlanRule[] = [
  chamberVsTjMax,
  storageRating,
  cyclingProfile,
  vcbVsBvcbo,
  vebVsBvebo,
  vceVsBvceo,
  activeRegion,
  operatingPoint,
  icVsIcMax,
  dissipation,
  forwardSoa,
  cyclePeakJunction,
  leakageSelfHeating,
  junctionTemperature,
];

export function checkPlan(device: DeviceTypeInput, plan: PlanInput, rules: readonly PlanRule[] = PLAN_RULES): PlanCheck {
  const chamber = plan.chamberC;
  const betaAtChamber = gainAtTemperature({ betaRef: device.betaRef, tRefC: device.betaRefTC, tC: chamber, xtb: device.xtb });
  const c: CheckContext = {
    device,
    plan,
    chamber,
    chamberTop: chamber + plan.chamberBand.aboveK,
    derating: plan.breakdownDerating,
    betaAtChamber,
    powered: { forcedIb: false, runaway: false },
    derived: {
      allowedVcbV: null,
      bvceoV: null,
      bvceoEstimated: null,
      allowedVceV: null,
      betaAtChamber,
      icA: null,
      powerW: null,
      deratedPowerLimitW: deratedPowerLimit({ tjMaxC: device.tjMaxC, tC: chamber, thetaCPerW: device.thetaJcCPerW }),
      tjC: null,
      loopGain: null,
      criticalAmbientC: null,
      runawayMarginC: null,
      leakageAtTjA: null,
      leakageDoublingC: null,
      soaAllowedIcA: null,
    },
  };
  const findings = rules.flatMap((rule) => rule(c));
  return { blocking: findings.some((f) => f.severity === 'block'), findings, derived: c.derived };
}
