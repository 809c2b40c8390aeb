/**
 * Plan-check rules for powered stresses (hotl, iol): active region, the operating point and its
 * runaway loop, collector current, dissipation and the cycling swing.
 */
import { isCyclingKind, isPoweredKind } from '../../domain/stress';
import { ACTIVE_REGION_MIN_VCE_V, MOSFET_THERMAL_NOTE, criticalAmbient, junctionTemperature, thermalOperatingPoint } from '../../physics';
import { A, C, V, W, againstLimit, numbers, pct, sig, titled } from './format';
import { againstTemperature } from './junction';
import {
  JUNCTION_WARN_MARGIN_K,
  LOOP_GAIN_BLOCK,
  LOOP_GAIN_WARN,
  RUNAWAY_MARGIN_WARN_C,
  type CheckContext,
  type Finding,
  type PlanRule,
  type Severity,
} from './types';

const vceOf = (c: CheckContext) => c.plan.bias.vceV ?? 0;

export const activeRegion: PlanRule = (c) => {
  if (!isPoweredKind(c.plan.kind)) return [];
  const vce = vceOf(c);
  if (vce < ACTIVE_REGION_MIN_VCE_V) {
    return [
      {
        code: 'vce-active-region',
        severity: 'warn',
        title: 'VCE too low for the active region',
        explanation:
          `VCE ${V(vce)} is below ${V(ACTIVE_REGION_MIN_VCE_V)}: the transistor is saturated, not in the active region. ` +
          'Collector current is then set by the circuit, not by gain, and an operating-life stress will not load the part as planned.',
        numbers: numbers([
          ['vceV', vce, 'V', 'Applied VCE'],
          ['minVceV', ACTIVE_REGION_MIN_VCE_V, 'V', 'Active-region minimum'],
        ]),
      },
    ];
  }
  return [
    {
      code: 'vce-active-region',
      severity: 'ok',
      title: 'VCE in the active region',
      explanation: `VCE ${V(vce)} is above ${V(ACTIVE_REGION_MIN_VCE_V)}, so the part operates in the active region.`,
      numbers: numbers([['vceV', vce, 'V', 'Applied VCE']]),
    },
  ];
};

/** IB forced on a bipolar part: solve the gain–temperature loop (operating point, loop gain, critical ambient). */
function forcedBaseCurrent(c: CheckContext): Finding[] {
  const { device, chamber, derived, betaAtChamber } = c;
  const vce = vceOf(c);
  const loop = {
    thetaCPerW: device.thetaJaCPerW,
    vceV: vce,
    ibA: c.plan.bias.ibA as number,
    betaRef: device.betaRef,
    tRefC: device.betaRefTC,
    xtb: device.xtb,
  };
  const op = thermalOperatingPoint({ ...loop, ambientC: chamber });
  const runaway = op.runaway;
  c.powered.runaway = runaway;
  const crit = criticalAmbient(loop);
  const margin = crit - chamber;
  derived.criticalAmbientC = Number.isFinite(crit) ? crit : null;
  derived.runawayMarginC = Number.isFinite(margin) ? margin : null;
  derived.loopGain = op.loopGain;
  if (!runaway) {
    derived.icA = op.icA;
    derived.powerW = op.powerW;
    derived.tjC = op.tjC;
  } else {
    // Lower bound: gain at the chamber temperature.
    derived.icA = betaAtChamber * loop.ibA;
    derived.powerW = vce * derived.icA;
  }
  const gsev: Severity = runaway || op.loopGain >= LOOP_GAIN_BLOCK ? 'block' : op.loopGain >= LOOP_GAIN_WARN ? 'warn' : 'ok';
  const msev: Severity = margin < 0 || !Number.isFinite(margin) ? 'block' : margin < RUNAWAY_MARGIN_WARN_C ? 'warn' : 'ok';
  return [
    {
      code: 'thermal-runaway',
      severity: gsev,
      title: runaway ? 'Thermal runaway: no stable operating point' : gsev === 'warn' ? 'Strong thermal feedback' : 'Thermally stable',
      explanation: runaway
        ? `With IB forced at ${A(loop.ibA)}, VCE ${V(vce)} and θja ${sig(device.thetaJaCPerW)} °C/W from a ${C(chamber)} chamber, ` +
          'heating raises the gain, which raises the current and the heating: the junction has no steady temperature below 400 °C ' +
          `(loop gain reaches ${sig(op.loopGain)} at the solver limit; stability needs < 1). Reduce IB, VCE or the chamber temperature, or regulate IC instead.`
        : `At the operating point (Tj ${C(op.tjC)}, IC ${A(op.icA)}, ${W(op.powerW)}) the loop gain θja·∂P/∂Tj is ${sig(op.loopGain)}; ` +
          `stability needs < ${LOOP_GAIN_BLOCK}, and ≥ ${LOOP_GAIN_WARN} is flagged because small changes in gain, θ or ambient then move Tj a lot.`,
      numbers: numbers([
        ['loopGain', op.loopGain, '', 'Loop gain θ·∂P/∂Tj'],
        ['tjC', op.tjC, '°C', 'Steady junction temperature'],
        ['icA', op.icA, 'A', 'Collector current'],
        ['powerW', op.powerW, 'W', 'Dissipation'],
        ['ibA', loop.ibA, 'A', 'Forced base current'],
      ]),
    },
    {
      code: 'runaway-margin',
      severity: msev,
      title: titled(msev, 'Chamber above the critical ambient', 'Small margin to thermal runaway', 'Margin to thermal runaway'),
      explanation: Number.isFinite(crit)
        ? `The highest ambient with a stable operating point is ${C(crit)}; the chamber at ${C(chamber)} leaves ` +
          `${sig(margin)} °C of margin (flagged below ${RUNAWAY_MARGIN_WARN_C} °C: chamber overshoot, a hotter socket or a ` +
          'higher-gain part in the lot can use it up).'
        : 'No ambient temperature gives a stable operating point with this bias.',
      numbers: numbers([
        ['criticalAmbientC', crit, '°C', 'Critical ambient'],
        ['chamberC', chamber, '°C', 'Chamber set point'],
        ['marginC', margin, '°C', 'Margin'],
      ]),
    },
  ];
}

/** IC regulated by the rig: no gain loop; Tj from θja and the fixed dissipation. */
function regulatedCollectorCurrent(c: CheckContext, icA: number): Finding[] {
  const { device, chamber, derived } = c;
  const powerW = vceOf(c) * icA;
  derived.icA = icA;
  derived.powerW = powerW;
  derived.tjC = junctionTemperature({ referenceC: chamber, thetaCPerW: device.thetaJaCPerW, powerW });
  return [
    {
      code: 'thermal-runaway',
      severity: 'ok',
      title: 'No gain–temperature runaway loop',
      explanation:
        device.kind === 'mosfet'
          ? `${MOSFET_THERMAL_NOTE} The rig regulates the current at ${A(icA)}.`
          : `The rig regulates IC at ${A(icA)}, so rising gain with temperature cannot raise the current; dissipation stays ${W(powerW)}.`,
      numbers: numbers([
        ['icA', icA, 'A', 'Regulated current'],
        ['powerW', powerW, 'W', 'Dissipation'],
      ]),
    },
  ];
}

/** The powered operating point: forced IB (bipolar), regulated IC, or neither (cannot predict). */
export const operatingPoint: PlanRule = (c) => {
  if (!isPoweredKind(c.plan.kind)) return [];
  const { device, plan } = c;
  c.powered.forcedIb = device.kind === 'bjt' && plan.bias.ibA !== null;
  if (c.powered.forcedIb) return forcedBaseCurrent(c);
  if (plan.bias.icA !== null) return regulatedCollectorCurrent(c, plan.bias.icA);
  return [
    {
      code: 'thermal-runaway',
      severity: 'warn',
      title: 'Dissipation cannot be predicted',
      explanation:
        device.kind === 'mosfet'
          ? `${MOSFET_THERMAL_NOTE} A forced base current has no meaning for a MOSFET; give the regulated drain current instead.`
          : 'A forced base current is only modelled for bipolar transistors; give the regulated current instead.',
      numbers: {},
    },
  ];
};

export const icVsIcMax: PlanRule = ({ plan, device, derived, powered }) => {
  const icA = derived.icA;
  if (!isPoweredKind(plan.kind) || icA === null) return [];
  const sev = againstLimit(icA, device.icMaxA);
  const ib = plan.bias.ibA as number;
  return [
    {
      code: 'ic-vs-icmax',
      severity: sev,
      title: titled(
        sev,
        'Collector current above the rating',
        'Collector current close to the rating',
        'Collector current within the rating',
      ),
      explanation:
        `Collector current ${A(icA)}${powered.forcedIb ? ` (β ${sig(icA / ib)} × IB ${A(ib)})` : ''} ` +
        `against the rated ${A(device.icMaxA)} (${pct(icA / device.icMaxA)}).`,
      numbers: numbers([
        ['icA', icA, 'A', 'Collector current'],
        ['icMaxA', device.icMaxA, 'A', 'Rated IC max'],
      ]),
    },
  ];
};

export const dissipation: PlanRule = (c) => {
  const { plan, device, derived, chamber } = c;
  const powerW = derived.powerW;
  if (!isPoweredKind(plan.kind) || powerW === null) return [];
  const limit = derived.deratedPowerLimitW;
  const sev = limit <= 0 ? 'block' : againstLimit(powerW, limit);
  return [
    {
      code: 'dissipation-vs-derated-limit',
      severity: sev,
      title: titled(
        sev,
        'Dissipation above the derated limit',
        'Dissipation close to the derated limit',
        'Dissipation within the derated limit',
      ),
      explanation:
        `P = VCE·IC = ${V(vceOf(c))} × ${A(derived.icA as number)} = ${W(powerW)}${c.powered.runaway ? ' (at least — the gain keeps rising)' : ''}. ` +
        `Derated limit (Tj max − T case)/θjc = (${C(device.tjMaxC)} − ${C(chamber)})/${sig(device.thetaJcCPerW)} °C/W = ${W(limit)}, ` +
        'taking the case at the chamber temperature as a first estimate.',
      numbers: numbers([
        ['powerW', powerW, 'W', 'Dissipation'],
        ['limitW', limit, 'W', 'Derated limit'],
        ['thetaJcCPerW', device.thetaJcCPerW, '°C/W', 'θjc'],
      ]),
    },
  ];
};

export const cyclePeakJunction: PlanRule = ({ plan, device, chamber }) => {
  if (!isCyclingKind(plan.kind) || !plan.cycle) return [];
  const peak = chamber + plan.cycle.deltaTjC;
  const sev = againstTemperature(peak, device.tjMaxC, device.tjMaxC, JUNCTION_WARN_MARGIN_K);
  return [
    {
      code: 'cycle-peak-junction',
      severity: sev,
      title: titled(
        sev,
        'Cycling swing takes the junction above its rating',
        'Cycling swing peaks close to the junction rating',
        'Cycling swing within the junction rating',
      ),
      explanation:
        `A junction swing of ${sig(plan.cycle.deltaTjC)} °C from a ${C(chamber)} chamber peaks at about ${C(peak)} ` +
        `against ${C(device.tjMaxC)} rated (${sig(device.tjMaxC - peak)} K of margin; less than ${JUNCTION_WARN_MARGIN_K} K warns).`,
      numbers: numbers([
        ['peakTjC', peak, '°C', 'Peak junction temperature'],
        ['deltaTjC', plan.cycle.deltaTjC, '°C', 'Planned junction swing'],
      ]),
    },
  ];
};
