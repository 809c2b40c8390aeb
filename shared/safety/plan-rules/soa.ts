/**
 * Plan-check rule for powered bipolar plans (hotl, iol): the collector current against the forward
 * safe operating area at the plan's VCE — IC max, the power the case temperature allows, and the
 * second-breakdown (S/b) line I·V^n = const above its knee, derated with case temperature.
 */
import { DEFAULT_SB_KNEE_V, DEFAULT_SB_SLOPE_N, SB_DERATING_AT_TJMAX } from '../../domain/standards';
import { isPoweredKind } from '../../domain/stress';
import { forwardSoaLimit } from '../../physics';
import { A, C, V, W, numbers, pct, sig, titled } from './format';
import { WARN_FRACTION_OF_LIMIT, type PlanRule, type Severity } from './types';

const LIMITED_BY = {
  'ic-max': 'IC max',
  thermal: 'the power the case temperature allows',
  'second-breakdown': 'second breakdown',
} as const;

export const forwardSoa: PlanRule = ({ plan, device, derived, chamber }) => {
  const vce = plan.bias.vceV;
  const icA = derived.icA;
  if (!isPoweredKind(plan.kind) || device.kind !== 'bjt' || icA === null || vce === null || !(vce > 0)) return [];
  const powerW = vce * icA;
  // Case temperature from the predicted junction (θja, free air: on the hot side, so the limits
  // come out lower, not higher); the chamber when no steady junction was found.
  const tCaseC = derived.tjC !== null ? Math.max(chamber, derived.tjC - device.thetaJcCPerW * powerW) : chamber;
  const lim = forwardSoaLimit({
    vceV: vce,
    tCaseC,
    icMaxA: device.icMaxA,
    pMaxW: device.pMaxW,
    pRatedAtC: device.pRatedAtC,
    tjMaxC: device.tjMaxC,
    thetaJcCPerW: device.thetaJcCPerW,
    kneeV: device.sbKneeV,
    slopeN: device.sbSlopeN,
    sbAtTjMax: SB_DERATING_AT_TJMAX,
  });
  derived.soaAllowedIcA = lim.allowedA;
  // Close to a thermal or IC max limit is already the dissipation, junction and current rules' warning;
  // this rule warns only for the line they do not see, second breakdown.
  const sev: Severity =
    icA > lim.allowedA ? 'block' : lim.limitedBy === 'second-breakdown' && icA >= WARN_FRACTION_OF_LIMIT * lim.allowedA ? 'warn' : 'ok';
  const sb =
    vce > device.sbKneeV
      ? `S/b line ${A(lim.sbA / lim.sbDerating)} at ${V(vce)} (knee ${V(device.sbKneeV)}, slope n ${sig(device.sbSlopeN)}, from ${W(device.pMaxW)}/${V(device.sbKneeV)} at the knee) × ${sig(lim.sbDerating)} S/b derating at ${C(tCaseC)} case = ${A(lim.sbA)}`
      : `no second-breakdown limit at ${V(vce)} (at or below the ${V(device.sbKneeV)} knee)`;
  return [
    {
      code: 'forward-soa',
      severity: sev,
      title: titled(
        sev,
        'Beyond the forward safe operating area',
        'Close to the edge of the forward safe operating area',
        'Within the forward safe operating area',
      ),
      explanation:
        `IC ${A(icA)} at VCE ${V(vce)} (${W(powerW)}) against an allowed ${A(lim.allowedA)} (${pct(icA / lim.allowedA)}), ` +
        `set by ${LIMITED_BY[lim.limitedBy]}: thermal ${W(lim.thermalW)}/${V(vce)} = ${A(lim.thermalA)} at a ${C(tCaseC)} case; ${sb}; IC max ${A(device.icMaxA)}. ` +
        (sev === 'block'
          ? 'Second breakdown destroys a part in microseconds; lower VCE (the S/b line falls faster than the power line) or the current.'
          : `The case is taken at the predicted junction less θjc·P; knee and slope are the device type's${device.sbKneeV === DEFAULT_SB_KNEE_V && device.sbSlopeN === DEFAULT_SB_SLOPE_N ? ' (defaults — enter the data sheet’s SOA for a real check)' : ''}.`),
      numbers: numbers([
        ['icA', icA, 'A', 'Collector current'],
        ['vceV', vce, 'V', 'Applied VCE'],
        ['allowedIcA', lim.allowedA, 'A', 'SOA allowed IC'],
        ['thermalIcA', lim.thermalA, 'A', 'Thermal limit'],
        ['sbIcA', lim.sbA, 'A', 'Second-breakdown limit (derated)'],
        ['sbDerating', lim.sbDerating, '', 'S/b derating factor'],
        ['caseC', tCaseC, '°C', 'Case temperature'],
        ['kneeV', device.sbKneeV, 'V', 'S/b knee'],
      ]),
    },
  ];
};
