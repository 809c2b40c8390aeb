/** Plan-check rule for reverse-bias stresses (htrb, thb): leakage self-heating and its runaway. */
import { isReverseBiasKind } from '../../domain/stress';
import { criticalAmbientReverseBias, hotPointLeakage, reverseBiasOperatingPoint, type LeakageLoopInput } from '../../physics';
import type { DeviceTypeInput } from '../../schemas/devices';
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

interface LeakageSource {
  loop: LeakageLoopInput;
  doublingC: number;
  /** How the leakage was taken, in words. */
  basis: string;
}

/** The leakage law for a plan's VCB: the hot point by the two-point law when given, else 25 °C doubling every 10 °C. */
function leakageSource(device: DeviceTypeInput, vcb: number): LeakageSource | null {
  const base = { thetaCPerW: device.thetaJaCPerW, vrV: vcb, iLeakRefA: device.icboRefA ?? 0, tRefC: ICBO_REF_C };
  if (device.icboHotA !== null && device.icboHotC !== null && device.icboHotVcbV !== null) {
    const ref = device.icboRefA !== null ? { iA: device.icboRefA, tC: ICBO_REF_C } : null;
    const m = hotPointLeakage({
      hot: { iA: device.icboHotA, tC: device.icboHotC, vcbV: device.icboHotVcbV },
      ref,
      vcbV: vcb,
      fallbackDoublingC: LEAKAGE_DOUBLING_C,
    });
    const law = ref
      ? `doubling every ${sig(m.doublingC)} °C between ${A(ref.iA)} at ${C(ref.tC)} and ${A(device.icboHotA)} at ${C(device.icboHotC)}`
      : `${A(device.icboHotA)} at ${C(device.icboHotC)}, doubling every ${LEAKAGE_DOUBLING_C} °C below it (common practice; no 25 °C figure)`;
    const volts =
      m.voltageFactor > 1
        ? `, scaled ×${sig(m.voltageFactor)} from the point's ${V(device.icboHotVcbV)} to ${V(vcb)} (leakage ∝ √V, depletion width; assumed)`
        : ` (taken at the point's ${V(device.icboHotVcbV)}; not scaled down to ${V(vcb)})`;
    return {
      loop: { ...base, leakageAtC: m.leakageAtC },
      doublingC: m.doublingC,
      basis: `Hot-leakage point: ${law}${volts}; above ${C(device.icboHotC)} the steeper of that law and diffusion leakage (n_i²).`,
    };
  }
  if (device.icboRefA === null) return null;
  return {
    loop: { ...base, doublingC: LEAKAGE_DOUBLING_C },
    doublingC: LEAKAGE_DOUBLING_C,
    basis: `ICBO ${A(device.icboRefA)} at 25 °C, doubling every ${LEAKAGE_DOUBLING_C} °C (common practice; a hot-leakage point from the data sheet would replace this).`,
  };
}

export const leakageSelfHeating: PlanRule = ({ plan, device, chamber, chamberTop, derived }) => {
  const vcb = plan.bias.vcbV;
  if (!isReverseBiasKind(plan.kind) || vcb === null || !(vcb > 0)) return [];
  const src = leakageSource(device, vcb);
  if (src === null) {
    derived.tjC = chamber;
    return [
      {
        code: 'leakage-self-heating',
        severity: 'ok',
        title: 'Leakage self-heating not assessed',
        explanation:
          'The device type has no ICBO figure, so leakage heating is taken as negligible and the junction at the chamber temperature. ' +
          'Add ICBO at 25 °C or a hot-leakage point to the device type to check for leakage runaway.',
        numbers: {},
      },
    ];
  }
  derived.leakageDoublingC = src.doublingC;
  // The junction at the stated stress temperature; the runaway margin from the top of the band,
  // the hottest ambient the plan accepts.
  const op = reverseBiasOperatingPoint({ ...src.loop, ambientC: chamber });
  const top = reverseBiasOperatingPoint({ ...src.loop, ambientC: chamberTop });
  const crit = criticalAmbientReverseBias(src.loop);
  const margin = crit - chamberTop;
  const runaway = op.runaway || top.runaway;
  const loopGain = Math.max(op.loopGain, top.loopGain);
  derived.loopGain = loopGain;
  derived.criticalAmbientC = Number.isFinite(crit) ? crit : null;
  derived.runawayMarginC = Number.isFinite(margin) ? margin : null;
  derived.powerW = op.runaway ? null : op.powerW;
  derived.leakageAtTjA = op.runaway ? null : op.iA;
  derived.tjC = op.runaway ? null : op.tjC;
  const sev: Severity =
    runaway || loopGain >= LOOP_GAIN_BLOCK ? 'block' : loopGain >= LOOP_GAIN_WARN || margin < RUNAWAY_MARGIN_WARN_C ? 'warn' : 'ok';
  const above = chamberTop > chamber ? `the top of the chamber band (${C(chamberTop)})` : 'the chamber';
  return [
    {
      code: 'leakage-self-heating',
      severity: sev,
      title: runaway
        ? 'Leakage runaway: no stable junction temperature'
        : sev === 'warn'
          ? 'Leakage self-heating close to runaway'
          : 'Leakage self-heating small',
      explanation:
        (runaway
          ? `At VCB ${V(vcb)} and θja ${sig(device.thetaJaCPerW)} °C/W the leakage heats the junction faster than it can lose heat ` +
            `from a ${C(op.runaway ? chamber : chamberTop)} chamber. Reduce the chamber temperature or the reverse bias. `
          : `Leakage at the junction (${C(op.tjC)}) is about ${A(op.iA)}, dissipating ${W(op.powerW)}; loop gain ${sig(loopGain)}${chamberTop > chamber ? ' at the top of the band' : ''}. ` +
            (Number.isFinite(crit) ? `Leakage runaway would start above a ${C(crit)} ambient, ${sig(margin)} K above ${above}. ` : '')) +
        src.basis,
      numbers: numbers([
        ['loopGain', loopGain, '', 'Loop gain θ·∂P/∂Tj'],
        ['tjC', op.tjC, '°C', 'Steady junction temperature'],
        ['leakageA', op.iA, 'A', 'Leakage at Tj'],
        ['powerW', op.powerW, 'W', 'Leakage dissipation'],
        ['doublingC', src.doublingC, '°C', 'Leakage doubling step'],
        ['criticalAmbientC', crit, '°C', 'Critical ambient'],
        ['marginK', margin, 'K', 'Margin from the top of the band'],
      ]),
    },
  ];
};
