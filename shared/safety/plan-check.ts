/**
 * Plan check: a stress plan against the device's ratings before anything is powered.
 * Pure; every finding carries its numbers so the UI can show what was checked and why.
 *
 * First-estimate assumptions (stated in the findings too):
 * - Case temperature ≈ chamber temperature for the θjc dissipation limit (the case cannot be cooler
 *   than the chamber in a convection oven; a heatsinked rig runs the case hotter, so this is optimistic
 *   only by the case-to-chamber rise).
 * - Junction temperature and the runaway loop use θja from chamber ambient (device in free air in the
 *   chamber; conservative for a heatsinked rig, which has a lower junction-to-ambient resistance).
 * - Leakage given at 25 °C and doubling every 10 °C (common practice).
 */
import type { DeviceTypeInput } from '../schemas/devices';
import type { PlanInput } from '../schemas/plans';
import {
  ACTIVE_REGION_MIN_VCE_V,
  MOSFET_THERMAL_NOTE,
  criticalAmbient,
  criticalAmbientReverseBias,
  deratedPowerLimit,
  estimateBvceo,
  gainAtTemperature,
  junctionTemperature,
  reverseBiasOperatingPoint,
  thermalOperatingPoint,
} from '../physics';

/** A value at or above this fraction of a limit (a rating, or a derived limit) is a warning. */
export const WARN_FRACTION_OF_LIMIT = 0.9;
/** Loop gain θ·∂P/∂Tj at or above this warns (half-way to runaway). */
export const LOOP_GAIN_WARN = 0.5;
/** Loop gain at or above this blocks: no stable operating point (textbook stability criterion). */
export const LOOP_GAIN_BLOCK = 1;
/** Critical ambient less than this many °C above the chamber warns. */
export const RUNAWAY_MARGIN_WARN_C = 25;
/** Reference temperature of the device's ICBO figure (schema: "at 25 °C"). */
export const ICBO_REF_C = 25;
/** Leakage doubling step (common practice). */
export const LEAKAGE_DOUBLING_C = 10;
/** Trade rule of thumb: collector-emitter breakdown is often about half the collector-base figure. */
export const BVCEO_TO_BVCBO_RULE_OF_THUMB = 0.5;

export type Severity = 'block' | 'warn' | 'ok';

export interface FindingNumber {
  value: number;
  unit: string;
  label: string;
}

export interface Finding {
  code: string;
  severity: Severity;
  title: string;
  explanation: string;
  numbers: Record<string, FindingNumber>;
}

export interface PlanDerived {
  allowedVcbV: number | null;
  bvceoV: number | null;
  /** 1 when BVCEO was estimated from BVCBO and gain, 0 when rated, null when not needed. */
  bvceoEstimated: number | null;
  allowedVceV: number | null;
  betaAtChamber: number;
  icA: number | null;
  powerW: number | null;
  deratedPowerLimitW: number;
  /** Predicted steady junction temperature; null when there is no steady state (runaway) or power is unknown. */
  tjC: number | null;
  loopGain: number | null;
  criticalAmbientC: number | null;
  runawayMarginC: number | null;
  leakageAtTjA: number | null;
}

export interface PlanCheck {
  blocking: boolean;
  findings: Finding[];
  derived: PlanDerived;
}

// ---------------------------------------------------------------------------------------------

const sig = (x: number, digits = 3): string => {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  return String(+x.toPrecision(digits));
};

function withPrefix(x: number, unit: string): string {
  const a = Math.abs(x);
  if (a !== 0 && a < 1e-6) return `${sig(x * 1e9)} n${unit}`;
  if (a !== 0 && a < 1e-3) return `${sig(x * 1e6)} µ${unit}`;
  if (a !== 0 && a < 1) return `${sig(x * 1e3)} m${unit}`;
  return `${sig(x)} ${unit}`;
}
const V = (x: number) => `${sig(x)} V`;
const C = (x: number) => `${sig(x, 4)} °C`;
const W = (x: number) => withPrefix(x, 'W');
const A = (x: number) => withPrefix(x, 'A');
const pct = (x: number) => `${sig(x * 100)} %`;

function numbers(entries: [string, number, string, string][]): Record<string, FindingNumber> {
  const out: Record<string, FindingNumber> = {};
  for (const [key, value, unit, label] of entries) {
    if (Number.isFinite(value)) out[key] = { value, unit, label };
  }
  return out;
}

/** block above the limit, warn at ≥ 90 % of it, ok below. */
function againstLimit(value: number, limit: number): Severity {
  if (value > limit) return 'block';
  if (value >= WARN_FRACTION_OF_LIMIT * limit) return 'warn';
  return 'ok';
}

/** Breakdown: block above the plan's derated allowance, warn within 10 % of the rating itself. */
function againstBreakdown(v: number, rated: number, derating: number): Severity {
  if (v > rated * derating) return 'block';
  if (v >= WARN_FRACTION_OF_LIMIT * rated) return 'warn';
  return 'ok';
}

const isPowered = (plan: PlanInput) => plan.kind === 'hotl' || plan.kind === 'iol';
const isReverseBias = (plan: PlanInput) => plan.kind === 'htrb' || plan.kind === 'thb';

// ---------------------------------------------------------------------------------------------

export function checkPlan(device: DeviceTypeInput, plan: PlanInput): PlanCheck {
  const findings: Finding[] = [];
  const bias = plan.bias;
  const derating = plan.breakdownDerating;
  const chamber = plan.chamberC;
  const gainAt = (tC: number) => gainAtTemperature({ betaRef: device.betaRef, tRefC: device.betaRefTC, tC, xtb: device.xtb });
  const betaAtChamber = gainAt(chamber);

  const derived: PlanDerived = {
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
  };

  // --- chamber vs Tj max -------------------------------------------------------------------------
  {
    const over = chamber > device.tjMaxC;
    findings.push({
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
    });
  }

  // --- collector-base reverse bias vs BVCBO --------------------------------------------------------
  if (bias.vcbV !== null && bias.vcbV > 0) {
    const allowed = device.bvcboV * derating;
    derived.allowedVcbV = allowed;
    const sev = againstBreakdown(bias.vcbV, device.bvcboV, derating);
    const frac = bias.vcbV / device.bvcboV;
    findings.push({
      code: 'vcb-vs-bvcbo',
      severity: sev,
      title:
        sev === 'block'
          ? 'Collector-base voltage beyond the derated breakdown'
          : sev === 'warn'
            ? 'Collector-base voltage close to breakdown'
            : 'Collector-base voltage within the derated breakdown',
      explanation:
        `VCB ${V(bias.vcbV)} is ${pct(frac)} of the rated BVCBO ${V(device.bvcboV)}; the plan allows up to ` +
        `${pct(derating)} (${V(allowed)}). ` +
        (sev === 'block'
          ? 'Reduce the reverse bias or the plan will push parts into avalanche.'
          : sev === 'warn'
            ? `That is within ${pct(1 - WARN_FRACTION_OF_LIMIT)} of the rating; leakage at temperature and supply tolerance eat the rest.`
            : 'Reverse-bias stresses usually run at 80 % of the rating (JESD22-A108).'),
      numbers: numbers([
        ['vcbV', bias.vcbV, 'V', 'Applied VCB'],
        ['bvcboV', device.bvcboV, 'V', 'Rated BVCBO'],
        ['allowedVcbV', allowed, 'V', 'Derated allowance'],
        ['fractionOfRating', frac, '', 'Fraction of rating'],
      ]),
    });
  }

  // --- emitter-base reverse bias vs BVEBO ----------------------------------------------------------
  if (bias.vebV !== null && bias.vebV > 0) {
    const v = bias.vebV;
    const sev: Severity = v > device.bveboV ? 'block' : v > device.bveboV * derating ? 'warn' : 'ok';
    findings.push({
      code: 'veb-vs-bvebo',
      severity: sev,
      title:
        sev === 'block'
          ? 'Emitter-base reverse bias beyond BVEBO (destructive)'
          : sev === 'warn'
            ? 'Emitter-base reverse bias above the derated BVEBO'
            : 'Emitter-base reverse bias within BVEBO',
      explanation:
        `VEB ${V(v)} against a rated BVEBO of ${V(device.bveboV)} (derated ${V(device.bveboV * derating)}). ` +
        (sev === 'block'
          ? 'Driving the emitter-base junction into avalanche permanently lowers the gain (hot carriers damage the ' +
            'junction surface), so every part on test would be damaged. Remove or reduce the emitter-base bias.'
          : sev === 'warn'
            ? 'It is below the rating but above the plan’s derating; emitter-base avalanche permanently lowers gain.'
            : 'The emitter-base junction stays out of avalanche.'),
      numbers: numbers([
        ['vebV', v, 'V', 'Applied VEB'],
        ['bveboV', device.bveboV, 'V', 'Rated BVEBO'],
      ]),
    });
  }

  // --- collector-emitter voltage vs BVCEO ----------------------------------------------------------
  if (bias.vceV !== null && bias.vceV > 0) {
    const rated = device.bvceoV;
    const betaForBreakdown = Math.max(device.betaRef, betaAtChamber);
    const bvceo = rated ?? estimateBvceo({ bvcbo: device.bvcboV, beta: betaForBreakdown, n: device.breakdownN });
    const allowed = bvceo * derating;
    derived.bvceoV = bvceo;
    derived.bvceoEstimated = rated === null ? 1 : 0;
    derived.allowedVceV = allowed;
    const sev = againstBreakdown(bias.vceV, bvceo, derating);
    const source =
      rated !== null
        ? `the rated BVCEO ${V(bvceo)}`
        : `BVCEO ${V(bvceo)} estimated as BVCBO/β^(1/n) = ${V(device.bvcboV)}/${sig(betaForBreakdown)}^(1/${sig(device.breakdownN)}) ` +
          '(no rated figure given; gain taken at the chamber temperature, or the reference gain if higher)';
    findings.push({
      code: 'vce-vs-bvceo',
      severity: sev,
      title:
        sev === 'block'
          ? 'Collector-emitter voltage beyond the derated breakdown'
          : sev === 'warn'
            ? 'Collector-emitter voltage close to breakdown'
            : 'Collector-emitter voltage within the derated breakdown',
      explanation:
        `VCE ${V(bias.vceV)} against ${source}; the plan allows ${pct(derating)} of it (${V(allowed)}). ` +
        `Collector-emitter breakdown is well below the collector-base figure because the transistor's own gain ` +
        `multiplies the avalanche current — as a rule of thumb it is often about half of BVCBO ` +
        `(here BVCBO is ${V(device.bvcboV)}).`,
      numbers: numbers([
        ['vceV', bias.vceV, 'V', 'Applied VCE'],
        ['bvceoV', bvceo, 'V', rated !== null ? 'Rated BVCEO' : 'Estimated BVCEO'],
        ['allowedVceV', allowed, 'V', 'Derated allowance'],
        ['bvcboV', device.bvcboV, 'V', 'Rated BVCBO'],
      ]),
    });
  }

  // --- powered plans: active region, current, dissipation, runaway -------------------------------
  if (isPowered(plan)) {
    const vce = bias.vceV ?? 0;
    if (vce < ACTIVE_REGION_MIN_VCE_V) {
      findings.push({
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
      });
    } else {
      findings.push({
        code: 'vce-active-region',
        severity: 'ok',
        title: 'VCE in the active region',
        explanation: `VCE ${V(vce)} is above ${V(ACTIVE_REGION_MIN_VCE_V)}, so the part operates in the active region.`,
        numbers: numbers([['vceV', vce, 'V', 'Applied VCE']]),
      });
    }

    const forcedIb = device.kind === 'bjt' && bias.ibA !== null;
    let icA: number | null = null;
    let powerW: number | null = null;
    let runaway = false;

    if (forcedIb) {
      const loop = {
        thetaCPerW: device.thetaJaCPerW,
        vceV: vce,
        ibA: bias.ibA as number,
        betaRef: device.betaRef,
        tRefC: device.betaRefTC,
        xtb: device.xtb,
      };
      const op = thermalOperatingPoint({ ...loop, ambientC: chamber });
      runaway = op.runaway;
      const crit = criticalAmbient(loop);
      const margin = crit - chamber;
      derived.criticalAmbientC = Number.isFinite(crit) ? crit : null;
      derived.runawayMarginC = Number.isFinite(margin) ? margin : null;
      derived.loopGain = op.loopGain;
      if (!runaway) {
        icA = op.icA;
        powerW = op.powerW;
        derived.tjC = op.tjC;
      } else {
        // Lower bound: gain at the chamber temperature.
        icA = betaAtChamber * loop.ibA;
        powerW = vce * icA;
      }
      const gsev: Severity = runaway || op.loopGain >= LOOP_GAIN_BLOCK ? 'block' : op.loopGain >= LOOP_GAIN_WARN ? 'warn' : 'ok';
      findings.push({
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
      });
      const msev: Severity = margin < 0 || !Number.isFinite(margin) ? 'block' : margin < RUNAWAY_MARGIN_WARN_C ? 'warn' : 'ok';
      findings.push({
        code: 'runaway-margin',
        severity: msev,
        title:
          msev === 'block' ? 'Chamber above the critical ambient' : msev === 'warn' ? 'Small margin to thermal runaway' : 'Margin to thermal runaway',
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
      });
    } else if (bias.icA !== null) {
      icA = bias.icA;
      powerW = vce * icA;
      derived.tjC = junctionTemperature({ referenceC: chamber, thetaCPerW: device.thetaJaCPerW, powerW });
      findings.push({
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
      });
    } else {
      findings.push({
        code: 'thermal-runaway',
        severity: 'warn',
        title: 'Dissipation cannot be predicted',
        explanation:
          device.kind === 'mosfet'
            ? `${MOSFET_THERMAL_NOTE} A forced base current has no meaning for a MOSFET; give the regulated drain current instead.`
            : 'A forced base current is only modelled for bipolar transistors; give the regulated current instead.',
        numbers: {},
      });
    }
    derived.icA = icA;
    derived.powerW = powerW;

    if (icA !== null) {
      const sev = againstLimit(icA, device.icMaxA);
      findings.push({
        code: 'ic-vs-icmax',
        severity: sev,
        title: sev === 'block' ? 'Collector current above the rating' : sev === 'warn' ? 'Collector current close to the rating' : 'Collector current within the rating',
        explanation:
          `Collector current ${A(icA)}${forcedIb ? ` (β ${sig(icA / (bias.ibA as number))} × IB ${A(bias.ibA as number)})` : ''} ` +
          `against the rated ${A(device.icMaxA)} (${pct(icA / device.icMaxA)}).`,
        numbers: numbers([
          ['icA', icA, 'A', 'Collector current'],
          ['icMaxA', device.icMaxA, 'A', 'Rated IC max'],
        ]),
      });
    }

    if (powerW !== null) {
      const limit = derived.deratedPowerLimitW;
      const sev = limit <= 0 ? 'block' : againstLimit(powerW, limit);
      findings.push({
        code: 'dissipation-vs-derated-limit',
        severity: sev,
        title: sev === 'block' ? 'Dissipation above the derated limit' : sev === 'warn' ? 'Dissipation close to the derated limit' : 'Dissipation within the derated limit',
        explanation:
          `P = VCE·IC = ${V(vce)} × ${A(icA as number)} = ${W(powerW)}${runaway ? ' (at least — the gain keeps rising)' : ''}. ` +
          `Derated limit (Tj max − T case)/θjc = (${C(device.tjMaxC)} − ${C(chamber)})/${sig(device.thetaJcCPerW)} °C/W = ${W(limit)}, ` +
          'taking the case at the chamber temperature as a first estimate.',
        numbers: numbers([
          ['powerW', powerW, 'W', 'Dissipation'],
          ['limitW', limit, 'W', 'Derated limit'],
          ['thetaJcCPerW', device.thetaJcCPerW, '°C/W', 'θjc'],
        ]),
      });
    }

    if (plan.kind === 'iol' && plan.cycle) {
      const peak = chamber + plan.cycle.deltaTjC;
      const sev = againstLimit(peak, device.tjMaxC);
      findings.push({
        code: 'cycle-peak-junction',
        severity: sev,
        title:
          sev === 'block'
            ? 'Cycling swing takes the junction above its rating'
            : sev === 'warn'
              ? 'Cycling swing peaks close to the junction rating'
              : 'Cycling swing within the junction rating',
        explanation:
          `A junction swing of ${sig(plan.cycle.deltaTjC)} °C from a ${C(chamber)} chamber peaks at about ${C(peak)} ` +
          `against ${C(device.tjMaxC)} rated.`,
        numbers: numbers([
          ['peakTjC', peak, '°C', 'Peak junction temperature'],
          ['deltaTjC', plan.cycle.deltaTjC, '°C', 'Planned junction swing'],
        ]),
      });
    }
  }

  // --- reverse-bias plans: leakage self-heating ---------------------------------------------------
  if (isReverseBias(plan) && bias.vcbV !== null && bias.vcbV > 0) {
    if (device.icboRefA !== null) {
      const loop = {
        thetaCPerW: device.thetaJaCPerW,
        vrV: bias.vcbV,
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
      findings.push({
        code: 'leakage-self-heating',
        severity: sev,
        title: op.runaway ? 'Leakage runaway: no stable junction temperature' : sev === 'warn' ? 'Leakage self-heating close to runaway' : 'Leakage self-heating small',
        explanation: op.runaway
          ? `ICBO ${A(device.icboRefA)} at 25 °C, doubling every ${LEAKAGE_DOUBLING_C} °C, at VCB ${V(bias.vcbV)} and θja ` +
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
      });
    } else {
      derived.tjC = chamber;
      findings.push({
        code: 'leakage-self-heating',
        severity: 'ok',
        title: 'Leakage self-heating not assessed',
        explanation:
          'The device type has no ICBO figure, so leakage heating is taken as negligible and the junction at the chamber temperature. ' +
          'Add ICBO at 25 °C to the device type to check for leakage runaway.',
        numbers: {},
      });
    }
  }

  // --- predicted junction temperature vs Tj max ----------------------------------------------------
  if (derived.tjC !== null) {
    const tj = derived.tjC;
    const sev = againstLimit(tj, device.tjMaxC);
    findings.push({
      code: 'junction-temperature',
      severity: sev,
      title: sev === 'block' ? 'Predicted junction above its rating' : sev === 'warn' ? 'Predicted junction close to its rating' : 'Predicted junction within its rating',
      explanation: (
        `Predicted steady junction ${C(tj)} against ${C(device.tjMaxC)} rated (θja ${sig(device.thetaJaCPerW)} °C/W from the ` +
        `${C(chamber)} chamber as ambient). ` +
        (sev === 'warn'
          ? `Within ${pct(1 - WARN_FRACTION_OF_LIMIT)} of the rating: intended for stresses run at Tj max, but the chamber's ±3 % band can take it over.`
          : '')
      ).trim(),
      numbers: numbers([
        ['tjC', tj, '°C', 'Predicted junction temperature'],
        ['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature'],
      ]),
    });
  } else if (isPowered(plan) && derived.powerW !== null) {
    findings.push({
      code: 'junction-temperature',
      severity: 'block',
      title: 'No steady junction temperature',
      explanation: `The junction has no steady temperature below 400 °C with this bias (rated ${C(device.tjMaxC)}).`,
      numbers: numbers([['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature']]),
    });
  } else if (isReverseBias(plan)) {
    findings.push({
      code: 'junction-temperature',
      severity: 'block',
      title: 'No steady junction temperature',
      explanation: `Leakage heating has no steady state below 400 °C (rated ${C(device.tjMaxC)}).`,
      numbers: numbers([['tjMaxC', device.tjMaxC, '°C', 'Rated max junction temperature']]),
    });
  }

  return { blocking: findings.some((f) => f.severity === 'block'), findings, derived };
}
