/**
 * Transistor temperature physics for plan checks and protection.
 * Pure functions, no I/O; compiles for the app and the server.
 *
 * Temperatures in °C at the interface, converted to kelvin inside where a law needs it.
 * The source of each law is named beside its function.
 */

/** °C → K offset. */
export const KELVIN_OFFSET = 273.15;

/** Below this VCE a silicon BJT is saturated, not in the active region (common practice). */
export const ACTIVE_REGION_MIN_VCE_V = 0.3;

/** Solver ceiling: no steady state above this junction temperature is accepted as stable. */
export const SOLVER_CEILING_C = 400;

/** Scan step (°C) when looking for the lowest fixed point before bisecting. */
export const SOLVER_SCAN_STEP_C = 0.25;

/**
 * Why the BJT runaway loop is not applied to MOSFETs.
 *
 * At a fixed gate drive above the zero-temperature-coefficient point, a MOSFET's drain current
 * falls as it heats (carrier mobility drops), so the electrical feedback is negative and the
 * positive gain-temperature loop of a bipolar transistor at forced base current does not exist.
 * Below that point (low gate drive, e.g. linear-mode operation) current can rise with temperature,
 * and leakage still grows with temperature in any junction (common practice).
 */
export const MOSFET_THERMAL_NOTE =
  'A MOSFET at fixed gate drive carries less drain current as it heats (mobility falls), ' +
  'so the bipolar gain–temperature runaway loop does not apply in the same way; ' +
  'at low gate drive (below the zero-temperature-coefficient point) current can still rise with temperature.';

const toK = (c: number): number => c + KELVIN_OFFSET;

/**
 * β(T) = β_ref · (T/T_ref)^XTB, temperatures in kelvin
 * (Gummel–Poon model as used in SPICE; XTB ≈ 1.5 common in published small-signal models).
 */
export function gainAtTemperature(p: { betaRef: number; tRefC: number; tC: number; xtb: number }): number {
  return p.betaRef * Math.pow(toK(p.tC) / toK(p.tRefC), p.xtb);
}

/** Open-base breakdown BVCEO ≈ BVCBO / β^(1/n), n ≈ 2–6 (Neamen, Semiconductor Physics and Devices). */
export function estimateBvceo(p: { bvcbo: number; beta: number; n: number }): number {
  return p.bvcbo / Math.pow(p.beta, 1 / p.n);
}

/** ICBO roughly doubles every `doublingC` (default 10 °C) — common practice. */
export function leakageAtTemperature(p: { iRefA: number; tRefC: number; tC: number; doublingC?: number }): number {
  const doubling = p.doublingC ?? 10;
  return p.iRefA * Math.pow(2, (p.tC - p.tRefC) / doubling);
}

/** Tj = T_ref + θ·P; T_ref is the case (θjc) or ambient (θja) — JEDEC JESD51 definitions. */
export function junctionTemperature(p: { referenceC: number; thetaCPerW: number; powerW: number }): number {
  return p.referenceC + p.thetaCPerW * p.powerW;
}

/**
 * A socket's junction estimated from its measured telemetry: Tj = T_case + θjc · |V · I| (JEDEC
 * JESD51 definitions). Under reverse bias the power is the leakage's, tiny, so Tj ≈ the socket's
 * case temperature; under powered bias V · I is VCE · IC (the base drive's VBE · IB is not
 * reported and is left out: a slight under-estimate). The same estimate live protection uses.
 */
export function junctionFromTelemetry(p: { caseC: number; vV: number; iA: number; thetaJcCPerW: number }): number {
  return junctionTemperature({ referenceC: p.caseC, thetaCPerW: p.thetaJcCPerW, powerW: Math.abs(p.vV * p.iA) });
}

/** P_max(T) = (Tj_max − T)/θ, clamped at 0 (no negative allowance when T ≥ Tj_max). */
export function deratedPowerLimit(p: { tjMaxC: number; tC: number; thetaCPerW: number }): number {
  return Math.max(0, (p.tjMaxC - p.tC) / p.thetaCPerW);
}

// ---------------------------------------------------------------------------------------------
// Generic self-heating solver
// ---------------------------------------------------------------------------------------------

export interface SelfHeatingPoint {
  /** Steady junction temperature (°C); Infinity when runaway. */
  tjC: number;
  /** Dissipation at tjC; when runaway, at the last evaluated point (the solver ceiling). */
  powerW: number;
  /** θ·∂P/∂Tj at tjC; when runaway, at the last evaluated point (the solver ceiling). */
  loopGain: number;
  /** True when no stable steady state exists below the ceiling (or loop gain ≥ 1). */
  runaway: boolean;
  /** Temperature at which powerW / loopGain were evaluated (tjC, or the ceiling when runaway). */
  evaluatedAtC: number;
}

export interface SelfHeatingInput {
  ambientC: number;
  thetaCPerW: number;
  /** Dissipation (W) as a function of junction temperature (°C). */
  powerAt: (tC: number) => number;
  ceilingC?: number;
  stepC?: number;
}

function derivative(fn: (t: number) => number, t: number): number {
  const h = 1e-3;
  return (fn(t + h) - fn(t - h)) / (2 * h);
}

/**
 * Lowest fixed point of Tj = Ta + θ·P(Tj) on [Ta, ceiling].
 *
 * f(T) = Ta + θ·P(T) − T is ≥ 0 at T = Ta (P ≥ 0). The scan walks up in `stepC` steps to the
 * first sign change and bisects it; that root is where the junction settles when heating from
 * ambient. It is stable when f'(T*) < 0, i.e. loop gain θ·∂P/∂Tj < 1 (textbook thermal-stability
 * criterion). No sign change below the ceiling (including a tangent touch at the critical point)
 * means runaway. Two roots closer together than one scan step (a near-tangent case, loop gain ≈ 1)
 * can be missed and are then reported as runaway — the conservative side.
 */
export function solveSelfHeating(input: SelfHeatingInput): SelfHeatingPoint {
  const ceiling = input.ceilingC ?? SOLVER_CEILING_C;
  const step = input.stepC ?? SOLVER_SCAN_STEP_C;
  const { ambientC: ta, thetaCPerW: theta, powerAt } = input;
  const f = (t: number) => ta + theta * powerAt(t) - t;
  const gainAt = (t: number) => theta * derivative(powerAt, t);
  const runawayResult = (): SelfHeatingPoint => ({
    tjC: Infinity,
    powerW: powerAt(ceiling),
    loopGain: gainAt(ceiling),
    runaway: true,
    evaluatedAtC: ceiling,
  });
  if (!(ta < ceiling)) return runawayResult();

  let lo = ta;
  const flo = f(lo);
  if (flo === 0) {
    const g = gainAt(lo);
    return g < 1 ? { tjC: lo, powerW: powerAt(lo), loopGain: g, runaway: false, evaluatedAtC: lo } : runawayResult();
  }
  while (lo < ceiling) {
    const hi = Math.min(lo + step, ceiling);
    const fhi = f(hi);
    if (fhi <= 0) {
      // Bisect [lo, hi] where f goes from > 0 to ≤ 0.
      let a = lo;
      let b = hi;
      for (let i = 0; i < 60 && b - a > 1e-9; i++) {
        const m = 0.5 * (a + b);
        if (f(m) > 0) a = m;
        else b = m;
      }
      const t = 0.5 * (a + b);
      const g = gainAt(t);
      if (g >= 1) return runawayResult();
      return { tjC: t, powerW: powerAt(t), loopGain: g, runaway: false, evaluatedAtC: t };
    }
    lo = hi;
  }
  return runawayResult();
}

/**
 * Highest ambient (°C) at which `solveSelfHeating` finds a stable point, by bisection on ambient.
 * Search range: (−273.15 °C + 1e-6 K) … ceiling (400 °C), to 0.01 °C. Returns −Infinity when even
 * the lowest ambient runs away. Returns the ceiling only if every ambient below it is stable
 * (the solver does not look above its ceiling). Assumes stability is lost once, as ambient rises
 * (true for dissipation that rises with temperature).
 */
export function criticalAmbientFor(p: {
  thetaCPerW: number;
  powerAt: (tC: number) => number;
  ceilingC?: number;
  toleranceC?: number;
}): number {
  const ceiling = p.ceilingC ?? SOLVER_CEILING_C;
  const tol = p.toleranceC ?? 0.01;
  const stable = (ta: number) =>
    !solveSelfHeating({ ambientC: ta, thetaCPerW: p.thetaCPerW, powerAt: p.powerAt, ceilingC: ceiling }).runaway;
  let lo = -KELVIN_OFFSET + 1e-6;
  let hi = ceiling;
  if (!stable(lo)) return -Infinity;
  if (stable(hi - tol)) return hi - tol;
  while (hi - lo > tol) {
    const m = 0.5 * (lo + hi);
    if (stable(m)) lo = m;
    else hi = m;
  }
  return lo;
}

// ---------------------------------------------------------------------------------------------
// BJT at forced base current
// ---------------------------------------------------------------------------------------------

export interface GainLoopInput {
  thetaCPerW: number;
  vceV: number;
  ibA: number;
  betaRef: number;
  tRefC: number;
  xtb: number;
}

/** P(Tj) = VCE · β(Tj) · IB for a BJT at fixed base current. */
export function forcedBasePower(p: GainLoopInput): (tC: number) => number {
  return (tC: number) => p.vceV * p.ibA * gainAtTemperature({ betaRef: p.betaRef, tRefC: p.tRefC, tC, xtb: p.xtb });
}

export interface ThermalOperatingPoint {
  /** Junction temperature (°C); Infinity when runaway. */
  tjC: number;
  /** Collector current; when runaway, at the solver ceiling (400 °C), i.e. a lower bound. */
  icA: number;
  /** VCE·IC; when runaway, at the solver ceiling, i.e. a lower bound. */
  powerW: number;
  /** θ·∂P/∂Tj at the operating point; when runaway, at the solver ceiling. */
  loopGain: number;
  runaway: boolean;
}

/**
 * Steady state of Tj = Ta + θ·VCE·β(Tj)·IB at fixed base current (see `solveSelfHeating`).
 * When runaway: tjC = Infinity, and icA / powerW / loopGain are evaluated at the solver ceiling.
 */
export function thermalOperatingPoint(p: GainLoopInput & { ambientC: number }): ThermalOperatingPoint {
  const powerAt = forcedBasePower(p);
  const r = solveSelfHeating({ ambientC: p.ambientC, thetaCPerW: p.thetaCPerW, powerAt });
  return {
    tjC: r.tjC,
    icA: p.ibA * gainAtTemperature({ betaRef: p.betaRef, tRefC: p.tRefC, tC: r.evaluatedAtC, xtb: p.xtb }),
    powerW: r.powerW,
    loopGain: r.loopGain,
    runaway: r.runaway,
  };
}

/** Highest ambient with a stable operating point for the forced-base BJT (see `criticalAmbientFor`). */
export function criticalAmbient(p: GainLoopInput): number {
  return criticalAmbientFor({ thetaCPerW: p.thetaCPerW, powerAt: forcedBasePower(p) });
}

// ---------------------------------------------------------------------------------------------
// Reverse bias: leakage self-heating
// ---------------------------------------------------------------------------------------------

export interface LeakageLoopInput {
  thetaCPerW: number;
  vrV: number;
  iLeakRefA: number;
  tRefC: number;
  doublingC?: number;
  /** Leakage at the bias vrV as a function of °C; overrides the reference point and doubling step (e.g. hotPointLeakage). */
  leakageAtC?: (tC: number) => number;
}

const leakageOf = (p: LeakageLoopInput) =>
  p.leakageAtC ?? ((tC: number) => leakageAtTemperature({ iRefA: p.iLeakRefA, tRefC: p.tRefC, tC, doublingC: p.doublingC }));

export function reverseBiasPower(p: LeakageLoopInput): (tC: number) => number {
  const leak = leakageOf(p);
  return (tC: number) => p.vrV * leak(tC);
}

export interface ReverseBiasOperatingPoint {
  tjC: number;
  /** Leakage current; when runaway, at the solver ceiling. */
  iA: number;
  powerW: number;
  loopGain: number;
  runaway: boolean;
}

/** Steady state of Tj = Ta + θ·V_R·I_leak(Tj), leakage doubling every `doublingC` (default 10 °C). */
export function reverseBiasOperatingPoint(p: LeakageLoopInput & { ambientC: number }): ReverseBiasOperatingPoint {
  const r = solveSelfHeating({ ambientC: p.ambientC, thetaCPerW: p.thetaCPerW, powerAt: reverseBiasPower(p) });
  return {
    tjC: r.tjC,
    iA: leakageOf(p)(r.evaluatedAtC),
    powerW: r.powerW,
    loopGain: r.loopGain,
    runaway: r.runaway,
  };
}

/** Highest ambient with a stable reverse-bias operating point. */
export function criticalAmbientReverseBias(p: LeakageLoopInput): number {
  return criticalAmbientFor({ thetaCPerW: p.thetaCPerW, powerAt: reverseBiasPower(p) });
}

// ---------------------------------------------------------------------------------------------
// Leakage from two data-sheet points
// ---------------------------------------------------------------------------------------------

/** Boltzmann constant (eV/K) [pub: CODATA 2018]. */
export const BOLTZMANN_EV_PER_K = 8.617333262e-5;
/** Silicon band gap at room temperature (eV) [pub: Sze, Physics of Semiconductor Devices — 1.12 eV]. */
export const SILICON_EG_EV = 1.12;
/**
 * Leakage against reverse voltage: generation current ∝ depletion width ∝ √V for an abrupt
 * junction [memory: Sze, p-n junction chapter — confirm]. Used only to scale a data-sheet point up
 * to a higher plan VCB (never down: a lower VCB keeps the point's current, which over-states it).
 * Avalanche multiplication close to breakdown is not included; data sheets usually state the hot
 * point at or near the rated VCB, where it already is.
 */
export const LEAKAGE_VOLTAGE_EXPONENT = 0.5;

import { leakageDoublingC } from './doubling';
export { leakageDoublingC };

/**
 * Diffusion leakage ∝ n_i² ∝ T³·exp(−Eg/kT): the ratio I(t2)/I(t1) [memory: Sze, p-n junction
 * chapter — the steepest of the leakage mechanisms; confirm]. Check (REFERENCE A5): 25 → 125 °C ≈ 1.355e5.
 */
export function diffusionLeakageRatio(t1C: number, t2C: number, egEv = SILICON_EG_EV): number {
  const t1 = toK(t1C);
  const t2 = toK(t2C);
  return Math.pow(t2 / t1, 3) * Math.exp((egEv / BOLTZMANN_EV_PER_K) * (1 / t1 - 1 / t2));
}

export interface HotLeakageModel {
  /** Leakage (A) at the plan's VCB as a function of °C. */
  leakageAtC: (tC: number) => number;
  /** °C per doubling between the points (the two-point law), or the fallback step when there is one point. */
  doublingC: number;
  /** Voltage factor applied to the data-sheet points (≥ 1). */
  voltageFactor: number;
}

/**
 * Leakage from the data sheet's hot point (ICBO at tC and vcbV), with the 25 °C figure when given:
 * - between the points and below, the two-point law (a constant doubling step, leakageDoublingC);
 *   with the hot point alone, `fallbackDoublingC` (common practice: 10 °C);
 * - above the hot point, the steeper of that law and diffusion leakage (n_i²), so extrapolating
 *   beyond the sheet's point never flattens the curve (the 10 °C rule under-predicts diffusion
 *   leakage at 125–150 °C: ×5.66 against ×8.26 — REFERENCE A5);
 * - both points are taken at the hot point's VCB and scaled by (vcbV / point VCB)^LEAKAGE_VOLTAGE_EXPONENT
 *   when the plan's VCB is higher.
 */
export function hotPointLeakage(p: {
  hot: { iA: number; tC: number; vcbV: number };
  ref: { iA: number; tC: number } | null;
  vcbV: number;
  fallbackDoublingC: number;
}): HotLeakageModel {
  const { hot } = p;
  const doublingC =
    p.ref && p.ref.iA < hot.iA && p.ref.tC < hot.tC
      ? leakageDoublingC({ i1A: p.ref.iA, t1C: p.ref.tC, i2A: hot.iA, t2C: hot.tC })
      : p.fallbackDoublingC;
  const voltageFactor = Math.max(1, Math.pow(p.vcbV / hot.vcbV, LEAKAGE_VOLTAGE_EXPONENT));
  const iHot = hot.iA * voltageFactor;
  const leakageAtC = (tC: number): number => {
    const law = iHot * Math.pow(2, (tC - hot.tC) / doublingC);
    return tC <= hot.tC ? law : Math.max(law, iHot * diffusionLeakageRatio(hot.tC, tC));
  };
  return { leakageAtC, doublingC, voltageFactor };
}

// ---------------------------------------------------------------------------------------------
// Forward safe operating area (bipolar)
// ---------------------------------------------------------------------------------------------

/** Slope n of the second-breakdown line through two SOA points: n = ln(I1/I2)/ln(V2/V1). */
export function sbSlopeFromPoints(p: { i1A: number; v1V: number; i2A: number; v2V: number }): number {
  return Math.log(p.i1A / p.i2A) / Math.log(p.v2V / p.v1V);
}

/** Knee of an S/b line through (vV, iA) with slope n: where it meets the power rating, I·V = pMaxW. */
export function sbKneeFromPoint(p: { iA: number; vV: number; n: number; pMaxW: number }): number {
  return Math.pow(p.pMaxW / (p.iA * Math.pow(p.vV, p.n)), 1 / (1 - p.n));
}

/** S/b current at VCE for a line leaving the power rating at kneeV with slope n (∞ at or below the knee). */
export function secondBreakdownCurrent(p: { vceV: number; kneeV: number; slopeN: number; pMaxW: number }): number {
  if (p.vceV <= p.kneeV) return Infinity;
  return (p.pMaxW / p.kneeV) * Math.pow(p.vceV / p.kneeV, -p.slopeN);
}

/** S/b derating with case temperature: 1 at the power rating's case temperature, falling linearly to `atTjMax` at Tj max. */
export function sbDerating(p: { tCaseC: number; pRatedAtC: number; tjMaxC: number; atTjMax: number }): number {
  const x = (p.tCaseC - p.pRatedAtC) / (p.tjMaxC - p.pRatedAtC);
  return 1 - (1 - p.atTjMax) * Math.min(1, Math.max(0, x));
}

export interface ForwardSoaLimit {
  /** Power the case temperature allows: min(Ptot, (Tj max − Tc)/θjc). */
  thermalW: number;
  thermalA: number;
  /** S/b current at VCE after derating (∞ at or below the knee). */
  sbA: number;
  sbDerating: number;
  icMaxA: number;
  allowedA: number;
  limitedBy: 'ic-max' | 'thermal' | 'second-breakdown';
}

/**
 * Allowed collector current at (VCE, Tc): min(IC max, P_D(Tc)/VCE, k_sb(Tc)·I_sb(VCE))
 * [REFERENCE A6: θjc = (Tj max − 25)/P_D25, P_D(Tc) = (Tj max − Tc)/θjc, I_sb = I1·(V/V1)^−n;
 * methods MIL-STD-750 3051/3052/3053 from memory — confirm]. VCE against BVCEO is the breakdown rule's.
 */
export function forwardSoaLimit(p: {
  vceV: number;
  tCaseC: number;
  icMaxA: number;
  pMaxW: number;
  pRatedAtC: number;
  tjMaxC: number;
  thetaJcCPerW: number;
  kneeV: number;
  slopeN: number;
  sbAtTjMax: number;
}): ForwardSoaLimit {
  const thermalW = Math.min(p.pMaxW, Math.max(0, (p.tjMaxC - p.tCaseC) / p.thetaJcCPerW));
  const thermalA = thermalW / p.vceV;
  const k = sbDerating({ tCaseC: p.tCaseC, pRatedAtC: p.pRatedAtC, tjMaxC: p.tjMaxC, atTjMax: p.sbAtTjMax });
  const sbA = k * secondBreakdownCurrent({ vceV: p.vceV, kneeV: p.kneeV, slopeN: p.slopeN, pMaxW: p.pMaxW });
  const allowedA = Math.min(p.icMaxA, thermalA, sbA);
  const limitedBy = p.icMaxA <= thermalA && p.icMaxA <= sbA ? 'ic-max' : thermalA <= sbA ? 'thermal' : 'second-breakdown';
  return { thermalW, thermalA, sbA, sbDerating: k, icMaxA: p.icMaxA, allowedA, limitedBy };
}
