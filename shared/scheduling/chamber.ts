/**
 * Chamber time: what an unbiased plan (tc, htsl, ac) asks of a rig, and why a rig cannot take it.
 * The capacity rule for chambers (Emberlot's, stated once): a chamber holds `socketCount` devices
 * (its load positions); runs may share it at the same time only when they run the same condition
 * — the same temperature, humidity and, for cycling, the same profile — and their devices together
 * fit its capacity. A chamber never takes a biased plan, a burn-in board never takes an unbiased one.
 */
import { AC_CONDITIONS } from '../domain/chamber-methods';
import type { RigKind } from '../domain/rig-kinds';
import { isThermalCyclingKind, isUnbiasedKind, PLAN_KIND_LABEL, type PlanKind } from '../domain/stress';
import type { ThermalCycle } from '../schemas/plans';

export interface ChamberNeeds {
  kind: PlanKind;
  /** Coldest air set point the chamber must hold (tc: below the cold extreme), or null. */
  minC: number | null;
  /** Absolute vessel pressure (kPa), autoclave / HAST, or null. */
  pressureKPa: number | null;
  /** A cycling profile's identity: runs share a cycling chamber only on the same profile. */
  profileKey: string | null;
}

/** The chamber needs of a plan, or null for a biased (socket) plan. */
export function chamberNeedsOf(plan: {
  kind: PlanKind;
  thermalCycle?: ThermalCycle | null;
  acCondition?: keyof typeof AC_CONDITIONS | null;
}): ChamberNeeds | null {
  if (!isUnbiasedKind(plan.kind)) return null;
  const tc = isThermalCyclingKind(plan.kind) ? (plan.thermalCycle ?? null) : null;
  const ac = plan.acCondition ? AC_CONDITIONS[plan.acCondition] : null;
  return {
    kind: plan.kind,
    minC: tc ? tc.lowC : null,
    pressureKPa: ac ? ac.pressureKPa : null,
    profileKey: tc ? `${tc.lowC}/${tc.highC}/${tc.dwellMin}/${tc.rampKPerMin}` : null,
  };
}

const f = (x: number) => String(+x.toFixed(2));

/** The rig in a sentence's subject: "Oven OV-01" or "Chamber TC-01". */
export const rigName = (rig: { code: string; kind?: RigKind }): string => `${rig.kind === 'chamber' ? 'Chamber' : 'Oven'} ${rig.code}`;

/** Refusals of a rig for a plan's chamber needs (kind of rig, cold limit, pressure). */
export function chamberRefusals(
  rig: { code: string; kind?: RigKind; minTempC?: number | null; maxPressureKPa?: number | null },
  chamber: ChamberNeeds | null | undefined,
): string[] {
  const kind = rig.kind ?? 'board';
  const out: string[] = [];
  if (!chamber) {
    if (kind === 'chamber') out.push(`${rigName(rig)} has no biased sockets; a socket-biased plan needs a burn-in oven.`);
    return out;
  }
  const what = PLAN_KIND_LABEL[chamber.kind].toLowerCase();
  if (kind !== 'chamber') {
    out.push(`${rigName(rig)} is a burn-in oven with biased sockets; a ${what} plan runs in a chamber.`);
    return out;
  }
  if (chamber.minC !== null) {
    const floor = rig.minTempC ?? null;
    if (floor === null) out.push(`${rigName(rig)} cannot cool below room temperature; the plan needs ${f(chamber.minC)} °C.`);
    else if (chamber.minC < floor) out.push(`${rigName(rig)} reaches no lower than ${f(floor)} °C; the plan needs ${f(chamber.minC)} °C.`);
  }
  if (chamber.pressureKPa !== null) {
    const top = rig.maxPressureKPa ?? null;
    if (top === null) out.push(`${rigName(rig)} is not a pressure vessel; the plan needs ${f(chamber.pressureKPa)} kPa.`);
    else if (chamber.pressureKPa > top)
      out.push(`${rigName(rig)} is rated to ${f(top)} kPa; the plan needs ${f(chamber.pressureKPa)} kPa.`);
  }
  return out;
}
