/** Plan-check rule for reverse-bias stresses (htrb, thb): leakage self-heating and its runaway. */
import { isReverseBiasKind } from '../../domain/stress';
import { criticalAmbientReverseBias, reverseBiasOperatingPoint } from '../../physics';
import { A, C, V, W, numbers, sig } from './format';
import {
  ICBO_REF_C,
  LEAKAGE_DOUBLING_C,
  LOOP_GAIN_BLOCK,
  LOOP_GAIN_WARN,
  RUNAWAY_MARGIN_WARN_C,
  type PlanRule,
  type Severity,
} from './types';

export const leakageSelfHeating: PlanRule = ({ plan, device, chamber, derived }) => {
  const vcb = plan.bias.vcbV;
  if (!isReverseBiasKind(plan.kind) || vcb === null || !(vcb > 0)) return [];
  if (device.icboRefA === null) {
    derived.tjC = chamber;
    return [
      {
        code: 'leakage-self-heating',
        severity: 'ok',
        title: 'Leakage self-heating not assessed',
        explanation:
          'The device type has no ICBO figure, so leakage heating is taken as negligible and the junction at the chamber temperature. ' +
          'Add ICBO at 25 °C to the device type to check for leakage runaway.',
        numbers: {},
      },
    ];
  }
  const loop = {
    thetaCPerW: device.thetaJaCPerW,
    vrV: vcb,
    iLeakRefA: device.icboRefA,
    tRefC: ICBO_REF_C,
    doublingC: LEAKAGE_DOUBLING_C,
  };
  const op = reverseBiasOperatingPoint({ ...loop, ambientC: chamber });
  const crit = criticalAmbientReverseBias(loop);
  const margin = crit - chamber;
  derived.loopGain = op.loopGain;
  derived.criticalAmbientC = Number.isFinite(crit) ? crit : null;
  derived.runawayMarginC = Number.isFinite(margin) ? margin : null;
  derived.powerW = op.runaway ? null : op.powerW;
  derived.leakageAtTjA = op.runaway ? null : op.iA;
  derived.tjC = op.runaway ? null : op.tjC;
  const sev: Severity =
    op.runaway || op.loopGain >= LOOP_GAIN_BLOCK
      ? 'block'
      : op.loopGain >= LOOP_GAIN_WARN || margin < RUNAWAY_MARGIN_WARN_C
        ? 'warn'
        : 'ok';
  return [
    {
      code: 'leakage-self-heating',
      severity: sev,
      title: op.runaway
        ? 'Leakage runaway: no stable junction temperature'
        : sev === 'warn'
          ? 'Leakage self-heating close to runaway'
          : 'Leakage self-heating small',
      explanation: op.runaway
        ? `ICBO ${A(device.icboRefA)} at 25 °C, doubling every ${LEAKAGE_DOUBLING_C} °C, at VCB ${V(vcb)} and θja ` +
          `${sig(device.thetaJaCPerW)} °C/W: the leakage heats the junction faster than it can lose heat from a ${C(chamber)} chamber. ` +
          'Reduce the chamber temperature or the reverse bias.'
        : `Leakage at the junction (${C(op.tjC)}) is about ${A(op.iA)}, dissipating ${W(op.powerW)}; loop gain ${sig(op.loopGain)}. ` +
          (Number.isFinite(crit) ? `Leakage runaway would start above a ${C(crit)} ambient (${sig(margin)} °C above the chamber).` : ''),
      numbers: numbers([
        ['loopGain', op.loopGain, '', 'Loop gain θ·∂P/∂Tj'],
        ['tjC', op.tjC, '°C', 'Steady junction temperature'],
        ['leakageA', op.iA, 'A', 'Leakage at Tj'],
        ['powerW', op.powerW, 'W', 'Leakage dissipation'],
        ['criticalAmbientC', crit, '°C', 'Critical ambient'],
        ['marginC', margin, '°C', 'Margin'],
      ]),
    },
  ];
};
