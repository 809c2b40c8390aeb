/** Plan-check rules: the chamber and each applied voltage against the device's ratings. */
import { estimateBvceo } from '../../physics';
import { isUnbiasedKind } from '../../domain/stress';
import { C, V, againstBreakdown, numbers, pct, sig, titled } from './format';
import { WARN_FRACTION_OF_LIMIT, type PlanRule, type Severity } from './types';

/** Biased kinds only: an unbiased chamber stress is judged against the storage rating (chamber.ts). */
export const chamberVsTjMax: PlanRule = ({ chamber, device, plan }) => {
  if (isUnbiasedKind(plan.kind)) return [];
  const over = chamber > device.tjMaxC;
  return [
    {
      code: 'chamber-vs-tjmax',
      severity: over ? 'block' : 'ok',
      title: over ? 'Chamber hotter than the junction rating' : 'Chamber within the junction rating',
      explanation: over
        ? `The chamber is set to ${C(chamber)}, above the rated maximum junction temperature of ${C(device.tjMaxC)}. ` +
          'Even unbiased parts would exceed their rating; lower the chamber set point.'
        : `The chamber set point ${C(chamber)} is at or below the rated maximum junction temperature ${C(device.tjMaxC)}. ` +
          'Self-heating is checked separately below.',
      numbers: numbers([
        ['chamberC', chamber, '°C', 'Chamber set point'],
        ['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature'],
      ]),
    },
  ];
};

export const vcbVsBvcbo: PlanRule = ({ plan, device, derating, derived }) => {
  const vcb = plan.bias.vcbV;
  if (vcb === null || !(vcb > 0)) return [];
  const allowed = device.bvcboV * derating;
  derived.allowedVcbV = allowed;
  const sev = againstBreakdown(vcb, device.bvcboV, derating);
  const frac = vcb / device.bvcboV;
  return [
    {
      code: 'vcb-vs-bvcbo',
      severity: sev,
      title: titled(
        sev,
        'Collector-base voltage beyond the derated breakdown',
        'Collector-base voltage close to breakdown',
        'Collector-base voltage within the derated breakdown',
      ),
      explanation:
        `VCB ${V(vcb)} is ${pct(frac)} of the rated BVCBO ${V(device.bvcboV)}; the plan allows up to ` +
        `${pct(derating)} (${V(allowed)}). ` +
        titled(
          sev,
          'Reduce the reverse bias or the plan will push parts into avalanche.',
          `That is within ${pct(1 - WARN_FRACTION_OF_LIMIT)} of the rating; leakage at temperature and supply tolerance eat the rest.`,
          'Reverse-bias stresses usually run at 80 % of the rating (JESD22-A108).',
        ),
      numbers: numbers([
        ['vcbV', vcb, 'V', 'Applied VCB'],
        ['bvcboV', device.bvcboV, 'V', 'Rated BVCBO'],
        ['allowedVcbV', allowed, 'V', 'Derated allowance'],
        ['fractionOfRating', frac, '', 'Fraction of rating'],
      ]),
      ...(vcb > device.bvcboV ? { neverOverride: true } : {}),
    },
  ];
};

export const vebVsBvebo: PlanRule = ({ plan, device, derating }) => {
  const v = plan.bias.vebV;
  if (v === null || !(v > 0)) return [];
  const sev: Severity = v > device.bveboV ? 'block' : v > device.bveboV * derating ? 'warn' : 'ok';
  return [
    {
      code: 'veb-vs-bvebo',
      severity: sev,
      title: titled(
        sev,
        'Emitter-base reverse bias beyond BVEBO (destructive)',
        'Emitter-base reverse bias above the derated BVEBO',
        'Emitter-base reverse bias within BVEBO',
      ),
      explanation:
        `VEB ${V(v)} against a rated BVEBO of ${V(device.bveboV)} (derated ${V(device.bveboV * derating)}). ` +
        titled(
          sev,
          'Driving the emitter-base junction into avalanche permanently lowers the gain (hot carriers damage the ' +
            'junction surface), so every part on test would be damaged. Remove or reduce the emitter-base bias.',
          'It is below the rating but above the plan’s derating; emitter-base avalanche permanently lowers gain.',
          'The emitter-base junction stays out of avalanche.',
        ),
      numbers: numbers([
        ['vebV', v, 'V', 'Applied VEB'],
        ['bveboV', device.bveboV, 'V', 'Rated BVEBO'],
      ]),
      ...(v > device.bveboV ? { neverOverride: true } : {}),
    },
  ];
};

export const vceVsBvceo: PlanRule = ({ plan, device, derating, derived, betaAtChamber }) => {
  const vce = plan.bias.vceV;
  if (vce === null || !(vce > 0)) return [];
  const rated = device.bvceoV;
  const betaForBreakdown = Math.max(device.betaRef, betaAtChamber);
  const bvceo = rated ?? estimateBvceo({ bvcbo: device.bvcboV, beta: betaForBreakdown, n: device.breakdownN });
  const allowed = bvceo * derating;
  derived.bvceoV = bvceo;
  derived.bvceoEstimated = rated === null ? 1 : 0;
  derived.allowedVceV = allowed;
  const sev = againstBreakdown(vce, bvceo, derating);
  const source =
    rated !== null
      ? `the rated BVCEO ${V(bvceo)}`
      : `BVCEO ${V(bvceo)} estimated as BVCBO/β^(1/n) = ${V(device.bvcboV)}/${sig(betaForBreakdown)}^(1/${sig(device.breakdownN)}) ` +
        '(no rated figure given; gain taken at the chamber temperature, or the reference gain if higher)';
  return [
    {
      code: 'vce-vs-bvceo',
      severity: sev,
      title: titled(
        sev,
        'Collector-emitter voltage beyond the derated breakdown',
        'Collector-emitter voltage close to breakdown',
        'Collector-emitter voltage within the derated breakdown',
      ),
      explanation:
        `VCE ${V(vce)} against ${source}; the plan allows ${pct(derating)} of it (${V(allowed)}). ` +
        `Collector-emitter breakdown is well below the collector-base figure because the transistor's own gain ` +
        `multiplies the avalanche current — as a rule of thumb it is often about half of BVCBO ` +
        `(here BVCBO is ${V(device.bvcboV)}).`,
      numbers: numbers([
        ['vceV', vce, 'V', 'Applied VCE'],
        ['bvceoV', bvceo, 'V', rated !== null ? 'Rated BVCEO' : 'Estimated BVCEO'],
        ['allowedVceV', allowed, 'V', 'Derated allowance'],
        ['bvcboV', device.bvcboV, 'V', 'Rated BVCBO'],
      ]),
    },
  ];
};
