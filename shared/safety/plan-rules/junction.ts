/**
 * Plan-check rule: the predicted steady junction temperature (from the rules before it) against
 * Tj max, by margins in kelvin. A reverse-bias stress is run at the junction rating by the method
 * (HTRB at Tj max, with the band above it): its junction may sit up to the band's top above the
 * rating before this blocks, and being at rating is not a warning. A powered junction must stay
 * at or below the rating and warns within JUNCTION_WARN_MARGIN_K of it.
 */
import { bandText } from '../../domain/standards';
import { isPoweredKind, isReverseBiasKind } from '../../domain/stress';
import { C, numbers, sig, titled } from './format';
import { JUNCTION_WARN_MARGIN_K, type PlanRule, type Severity } from './types';

/** Block above `limitC`, warn less than `warnK` below `warnBelowC`, else ok (kelvin margins). */
export function againstTemperature(tC: number, limitC: number, warnBelowC: number, warnK: number): Severity {
  if (tC > limitC) return 'block';
  if (warnBelowC - tC < warnK) return 'warn';
  return 'ok';
}

export const junctionTemperature: PlanRule = ({ plan, device, chamber, derived }) => {
  const tjMax = numbers([['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature']]);
  if (derived.tjC !== null) {
    const tj = derived.tjC;
    const atRating = isReverseBiasKind(plan.kind);
    const limitC = atRating ? device.tjMaxC + plan.chamberBand.aboveK : device.tjMaxC;
    const sev = atRating ? (tj > limitC ? 'block' : 'ok') : againstTemperature(tj, limitC, device.tjMaxC, JUNCTION_WARN_MARGIN_K);
    return [
      {
        code: 'junction-temperature',
        severity: sev,
        title: titled(
          sev,
          'Predicted junction above its rating',
          'Predicted junction close to its rating',
          atRating && tj >= device.tjMaxC ? 'Predicted junction at its rating, within the band' : 'Predicted junction within its rating',
        ),
        explanation:
          `Predicted steady junction ${C(tj)} against ${C(device.tjMaxC)} rated (θja ${sig(device.thetaJaCPerW)} °C/W from the ` +
          `${C(chamber)} chamber as ambient), ${tj <= device.tjMaxC ? `${sig(device.tjMaxC - tj)} K below` : `${sig(tj - device.tjMaxC)} K above`} the rating. ` +
          (atRating
            ? `A reverse-bias stress runs at the junction rating by its method; the chamber band ${bandText(plan.chamberBand)} lets it reach ${C(limitC)}.`
            : sev === 'warn'
              ? `Less than ${JUNCTION_WARN_MARGIN_K} K of margin: the spread of θja and gain across a lot can take a part over.`
              : ''),
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
