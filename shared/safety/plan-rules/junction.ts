/** Plan-check rule: the predicted steady junction temperature (from the rules before it) against Tj max. */
import { CHAMBER_TOLERANCE_PCT } from '../../domain/standards';
import { isPoweredKind, isReverseBiasKind } from '../../domain/stress';
import { C, againstLimit, numbers, pct, sig, titled } from './format';
import { WARN_FRACTION_OF_LIMIT, type PlanRule } from './types';

export const junctionTemperature: PlanRule = ({ plan, device, chamber, derived }) => {
  const tjMax = numbers([['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature']]);
  if (derived.tjC !== null) {
    const tj = derived.tjC;
    const sev = againstLimit(tj, device.tjMaxC);
    return [
      {
        code: 'junction-temperature',
        severity: sev,
        title: titled(
          sev,
          'Predicted junction above its rating',
          'Predicted junction close to its rating',
          'Predicted junction within its rating',
        ),
        explanation: (
          `Predicted steady junction ${C(tj)} against ${C(device.tjMaxC)} rated (θja ${sig(device.thetaJaCPerW)} °C/W from the ` +
          `${C(chamber)} chamber as ambient). ` +
          (sev === 'warn'
            ? `Within ${pct(1 - WARN_FRACTION_OF_LIMIT)} of the rating: intended for stresses run at Tj max, but the chamber's ±${CHAMBER_TOLERANCE_PCT} % band can take it over.`
            : '')
        ).trim(),
        numbers: numbers([
          ['tjC', tj, '°C', 'Predicted junction temperature'],
          ['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature'],
        ]),
      },
    ];
  }
  if (isPoweredKind(plan.kind) && derived.powerW !== null) {
    return [
      {
        code: 'junction-temperature',
        severity: 'block',
        title: 'No steady junction temperature',
        explanation: `The junction has no steady temperature below 400 °C with this bias (rated ${C(device.tjMaxC)}).`,
        numbers: tjMax,
      },
    ];
  }
  if (isReverseBiasKind(plan.kind)) {
    return [
      {
        code: 'junction-temperature',
        severity: 'block',
        title: 'No steady junction temperature',
        explanation: `Leakage heating has no steady state below 400 °C (rated ${C(device.tjMaxC)}).`,
        numbers: tjMax,
      },
    ];
  }
  return [];
};
