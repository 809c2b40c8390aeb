/**
 * Plan-check rules of the unbiased chamber kinds (tc, htsl, ac): with no bias nothing dissipates,
 * so the only rating at stake is the part's storage temperature range (Tstg) against the coldest
 * and hottest the chamber may take the load to (the extremes with their bands). As HTRB at Tj max,
 * a storage stress may be run at the rating itself (AEC-Q101 asks HTSL at the part's maximum —
 * from memory): a stated temperature beyond the rating blocks, a band that may carry the load past
 * it warns with the kelvins it may go over. Without a Tstg the
 * junction rating stands in for the top (a part never rated to store hotter than it may operate —
 * common practice) and the bottom is not judged but said so.
 */
import { TC_COLD_BAND_K } from '../../domain/chamber-methods';
import { isThermalCyclingKind, isUnbiasedKind } from '../../domain/stress';
import { tcPeriodMin } from '../../chamber/profile';
import { C, numbers, sig } from './format';
import type { Finding, PlanRule, Severity } from './types';

/** The hottest and coldest the chamber may take the load to under the plan (°C). */
export function chamberExtremes(plan: Parameters<PlanRule>[0]['plan']): { hotC: number; coldC: number | null } {
  const hotC = plan.chamberC + plan.chamberBand.aboveK;
  const coldC = isThermalCyclingKind(plan.kind) && plan.thermalCycle ? plan.thermalCycle.lowC - TC_COLD_BAND_K.belowK : null;
  return { hotC, coldC };
}

export const storageRating: PlanRule = ({ plan, device }) => {
  if (!isUnbiasedKind(plan.kind)) return [];
  const { hotC, coldC } = chamberExtremes(plan);
  const out: Finding[] = [];
  const topRated = device.tstgMaxC ?? device.tjMaxC;
  const topName = device.tstgMaxC !== null ? 'Tstg max' : 'Tj max (no Tstg entered)';
  const hotSev: Severity = plan.chamberC > topRated ? 'block' : hotC > topRated ? 'warn' : 'ok';
  out.push({
    code: 'chamber-vs-tstg-max',
    severity: hotSev,
    title:
      hotSev === 'block'
        ? 'Chamber can go hotter than the storage rating'
        : hotSev === 'warn'
          ? 'Chamber band reaches past the storage rating'
          : 'Chamber within the storage rating',
    explanation:
      `The chamber may take the load to ${C(hotC)} (${C(plan.chamberC)} and its band’s +${sig(plan.chamberBand.aboveK)} K) against ` +
      `${topName} ${C(topRated)}: ${hotC <= topRated ? `${sig(topRated - hotC)} K below` : `${sig(hotC - topRated)} K above`}. ` +
      (hotSev === 'block'
        ? 'Unbiased parts would be stored beyond their rating; lower the temperature or choose another condition.'
        : hotSev === 'warn'
          ? 'The stress is at the rating by its method; keep the chamber near the bottom of its band or narrow the band.'
          : device.tstgMaxC === null
            ? 'Enter the data sheet’s Tstg on the device type to check against the storage rating itself.'
            : ''),
    numbers: numbers([
      ['hotC', hotC, '°C', 'Hottest the load may reach'],
      ['ratedC', topRated, '°C', topName],
    ]),
  });
  if (coldC !== null) {
    if (device.tstgMinC === null) {
      out.push({
        code: 'chamber-vs-tstg-min',
        severity: 'warn',
        title: 'No storage rating to check the cold extreme against',
        explanation: `The load may go down to ${C(coldC)}; the device type has no Tstg minimum. Enter the data sheet’s Tstg.`,
        numbers: numbers([['coldC', coldC, '°C', 'Coldest the load may reach']]),
      });
    } else {
      const lowC = plan.thermalCycle!.lowC;
      const sev: Severity = lowC < device.tstgMinC ? 'block' : coldC < device.tstgMinC ? 'warn' : 'ok';
      out.push({
        code: 'chamber-vs-tstg-min',
        severity: sev,
        title:
          sev === 'block'
            ? 'Cold extreme below the storage rating'
            : sev === 'warn'
              ? 'Cold band reaches below the storage rating'
              : 'Cold extreme within the storage rating',
        explanation:
          `The load may go down to ${C(coldC)} (the cold extreme and its −${sig(TC_COLD_BAND_K.belowK)} K band) against Tstg min ` +
          `${C(device.tstgMinC)}: ${coldC >= device.tstgMinC ? `${sig(coldC - device.tstgMinC)} K above` : `${sig(device.tstgMinC - coldC)} K below`} it.`,
        numbers: numbers([
          ['coldC', coldC, '°C', 'Coldest the load may reach'],
          ['tstgMinC', device.tstgMinC, '°C', 'Tstg min'],
        ]),
      });
    }
  }
  return out;
};

/** Temperature cycling: the profile's swing and period, for the record (what a cycle takes). */
export const cyclingProfile: PlanRule = ({ plan }) => {
  if (!isThermalCyclingKind(plan.kind) || !plan.thermalCycle) return [];
  const p = plan.thermalCycle;
  const period = tcPeriodMin(p);
  return [
    {
      code: 'tc-profile',
      severity: 'ok',
      title: 'Temperature-cycling profile',
      explanation:
        `${C(p.lowC)} to ${C(p.highC)} (ΔT ${sig(p.highC - p.lowC)} K), ${sig(p.dwellMin)} min dwell at each extreme, ` +
        `air ramp ${sig(p.rampKPerMin)} K/min: ${sig(period)} min per cycle, ${sig(p.cycles)} cycles ≈ ${sig((p.cycles * period) / 60)} h of chamber time ` +
        'before read-point holds. A cycle counts only when the load reaches each extreme and dwells there.',
      numbers: numbers([
        ['deltaTK', p.highC - p.lowC, 'K', 'Swing'],
        ['periodMin', period, 'min', 'Minutes per cycle'],
        ['cycles', p.cycles, '', 'Cycles'],
      ]),
    },
  ];
};
