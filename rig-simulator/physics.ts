/**
 * Pure rig physics: oven, sockets, devices. No timers, no I/O — `stepRig(state, dtS)` returns a
 * new state, so every behaviour (lag, runaway, drift, destruction) is unit-testable.
 *
 * Time is in *stress* seconds (the rig's accelerated clock), temperatures in °C.
 *
 * Thermal path per socket: chamber —θca— case —θjc— junction.
 *   case → chamber + θca·P with a first-order lag (τcase, the heat sink's thermal mass);
 *   Tj = case + θjc·P (the die's own time constant is far shorter than a sample) [JEDEC JESD51 definitions].
 * Electrical:
 *   powered bias at forced IB: IC = β(Tj)·IB + (β+1)·ICBO(Tj), clamped by the supply's current limit;
 *   reverse bias: I = ICBO(Tj). β(T) from the Gummel–Poon law, ICBO doubling per ~10 °C (shared/physics).
 * Power is evaluated at the previous sub-step's Tj; sub-steps are a fraction of τcase, and the
 * exponential update is unconditionally stable, so a stable loop settles and an unstable one
 * (θ·∂P/∂Tj ≥ 1) runs away exactly as the steady-state criterion predicts.
 */
import { gainAtTemperature, leakageAtTemperature } from '../shared/physics';
import { junctionFromTsp, tspAt, TYPICAL_VBE_SLOPE_V_PER_K, type TspCalibration } from '../shared/physics/tsp';
import { createRng, gaussian, hashString } from './rng';
import { relativeHumidityPct, saturationVapourPressureHpa, vapourPressureHpa } from '../shared/holds/dew-point';
import { ROOM_AMBIENT_C } from '../shared/domain/standards';

export type BiasMode = 'powered' | 'reverse';
export type FailMode = 'short' | 'open';

/** One device under stress, with its individual parameters and its lot's drift rates. */
export interface DeviceModel {
  serial: string;
  partNumber: string;
  lotCode: string;
  /** hFE at betaRefTC (and the part's reference IC). */
  betaRef: number;
  betaRefTC: number;
  /** Gain-temperature exponent XTB. */
  xtb: number;
  /** ICBO at icboRefTC, A. */
  icboRefA: number;
  icboRefTC: number;
  /** °C per doubling of leakage. */
  doublingC: number;
  thetaJcCPerW: number;
  tjMaxC: number;
  /** Linear hFE drift under stress, % of initial per 1000 stress hours (negative = gain falls). */
  hfeDriftPctPer1000h: number;
  /** Leakage growth factor per 1000 stress hours (1 = none), applied as ratio^(h/1000). */
  leakageRatioPer1000h: number;
  /** What the device becomes when destroyed by overheating. */
  failMode: FailMode;
  /** Its temperature-sensitive parameter (VBE at the sense current); default DEFAULT_TSP. */
  tsp?: TspCalibration;
}

/** VBE at a small sense current: ≈ 0.65 V at 25 °C, −2 mV/K [pub: JESD51-1, typical silicon]. */
export const DEFAULT_TSP: TspCalibration = { v0V: 0.65, t0C: 25, slopeVPerK: TYPICAL_VBE_SLOPE_V_PER_K };
/** The rig reads the TSP with this resolution (0.1 mV ≈ 0.05 K). */
export const TSP_RESOLUTION_V = 1e-4;
/** A rig with swing control aims this many kelvin above the planned ΔTj (inside the band, cycling.ts). */
export const SWING_AIM_ABOVE_K = 3;

/**
 * A socket's power-cycling program (bias command `cycle`): power on for onS, off for offS, and the
 * junction swing measured from the TSP at the end of each on-time (hot) and off-time (cold). The
 * rig scales the socket's drive after each cycle toward the planned swing (within ×0.5…×2 of the
 * commanded drive), as a power-cycling rig with swing control does.
 */
export interface CycleProgram {
  onS: number;
  offS: number;
  deltaTjC: number;
  /** Stress seconds into the current cycle (on first, then off). */
  phaseS: number;
  /** Tj read from the TSP at the end of this cycle's on-time. */
  hotTjC: number | null;
  driveScale: number;
}

export interface SocketState {
  i: number;
  device: DeviceModel;
  mode: BiasMode;
  /** Case-to-chamber thermal resistance: the socket's heat sinking. */
  thetaCaCPerW: number;
  /** First-order time constant of the case temperature, stress seconds. */
  caseTauS: number;
  /**
   * Heat-sink degradation (a drying thermal pad, a loose clamp): θca grows by this many °C/W per
   * stress hour while the socket is energised, up to thetaCaMaxCPerW. 0 = a sound socket.
   */
  thetaCaRampCPerWPerH: number;
  thetaCaMaxCPerW: number;
  /** Requested bias (the trip latch overrides it). */
  biasOn: boolean;
  /** VCE (powered) or reverse voltage (reverse), V. */
  vV: number;
  /** Forced base current IB under powered bias, A (unused under reverse bias, or while icSetA is set). */
  ibA: number;
  /**
   * Collector current the rig regulates under powered bias, A: it servoes the base drive to hold IC
   * there, so a gain rising with temperature cannot raise the current. Null/absent = forced IB.
   */
  icSetA?: number | null;
  /** Bias supply current limit, A. */
  complianceA: number;
  tripped: boolean;
  tripReason: string | null;
  destroyed: FailMode | null;
  caseC: number;
  tjC: number;
  /** Device current now, A (collector current or leakage). */
  iA: number;
  /** Voltage across the device now, V (≈0 when off or shorted). */
  vOutV: number;
  powerW: number;
  /** Stress hours accumulated under bias: drives drift. */
  stressH: number;
  /** Power cycling: the program (null/absent = continuous), completed cycles since boot, swings since the last report. */
  cycle?: CycleProgram | null;
  cycleCount?: number;
  swingLowC?: number | null;
  swingHighC?: number | null;
}

export interface RigState {
  rigCode: string;
  /** Accelerated clock, stress seconds since boot. */
  stressClockS: number;
  chamberC: number;
  setpointC: number;
  chamberTauS: number;
  /** Relative humidity the chamber's sensor reads, % (null: no humidity sensor). Derived from vapourHpa. */
  humidityPct: number | null;
  humiditySetpointPct: number | null;
  /**
   * Water vapour in the chamber air, hPa (null without humidity control). The humidifier drives it
   * toward the set RH at the present dry bulb; with control off the chamber purges toward room air.
   * Vapour above saturation condenses on the coldest surfaces (the parts): condensationS counts it.
   */
  vapourHpa: number | null;
  /** Stress seconds during which the air was saturated (dry bulb at or below the dew point). */
  condensationS: number;
  maxTempC: number;
  humidityCapable: boolean;
  sockets: SocketState[];
}

/** Room air a humidity chamber purges toward with its control off: 25 °C / 50 % RH [practice: a lab's conditioned air]. */
export const ROOM_AIR = { tC: ROOM_AMBIENT_C, rhPct: 50 } as const;
const ROOM_VAPOUR_HPA = vapourPressureHpa(ROOM_AIR.tC, ROOM_AIR.rhPct);

/** One humidity sub-step: vapour toward its target, condensed down to saturation; the sensor's RH. */
function stepVapour(
  state: RigState,
  vapourHpa: number,
  chamberC: number,
  h: number,
): { vapourHpa: number; rhPct: number; saturated: boolean } {
  const target = state.humiditySetpointPct === null ? ROOM_VAPOUR_HPA : vapourPressureHpa(chamberC, state.humiditySetpointPct);
  let e = lag(vapourHpa, target, h, state.chamberTauS);
  const sat = saturationVapourPressureHpa(chamberC);
  const saturated = e >= sat;
  if (saturated) e = sat;
  return { vapourHpa: e, rhPct: relativeHumidityPct(chamberC, e), saturated };
}

export const DESTROY_MARGIN_C = 50;
/** Resistance of a shorted die, Ω. */
const SHORT_OHMS = 0.05;
/** Base-emitter drop for base-drive power, V. */
const VBE_V = 0.7;

export function hfeDriftFactor(device: DeviceModel, stressH: number): number {
  return Math.max(0.05, 1 + (device.hfeDriftPctPer1000h / 100) * (stressH / 1000));
}

export function leakageDriftFactor(device: DeviceModel, stressH: number): number {
  return Math.pow(device.leakageRatioPer1000h, stressH / 1000);
}

export function deviceGain(device: DeviceModel, tC: number, stressH = 0): number {
  const beta = gainAtTemperature({ betaRef: device.betaRef, tRefC: device.betaRefTC, tC, xtb: device.xtb });
  return beta * hfeDriftFactor(device, stressH);
}

export function deviceLeakage(device: DeviceModel, tC: number, stressH = 0): number {
  const i = leakageAtTemperature({ iRefA: device.icboRefA, tRefC: device.icboRefTC, tC, doublingC: device.doublingC });
  return i * leakageDriftFactor(device, stressH);
}

/** True when bias actually reaches the device. */
export function isEnergised(s: Pick<SocketState, 'biasOn' | 'tripped'>): boolean {
  return s.biasOn && !s.tripped;
}

/** True when power flows now: energised, and in the on-time of a cycling program. */
export function powerFlows(s: Pick<SocketState, 'biasOn' | 'tripped' | 'cycle'>): boolean {
  return isEnergised(s) && (!s.cycle || s.cycle.phaseS < s.cycle.onS);
}

/** Electrical operating point of a socket at a junction temperature (pure). */
export function socketElectrical(s: SocketState, tjC: number): { iA: number; vOutV: number; powerW: number } {
  if (!powerFlows(s) || s.destroyed === 'open') return { iA: 0, vOutV: 0, powerW: 0 };
  const scale = s.cycle ? s.cycle.driveScale : 1;
  if (s.destroyed === 'short') {
    const i = Math.min(s.complianceA, s.vV / SHORT_OHMS);
    return { iA: i, vOutV: i * SHORT_OHMS, powerW: i * i * SHORT_OHMS };
  }
  if (s.mode === 'reverse') {
    const i = Math.min(s.complianceA, deviceLeakage(s.device, tjC, s.stressH));
    return { iA: i, vOutV: s.vV, powerW: s.vV * i };
  }
  const beta = deviceGain(s.device, tjC, s.stressH);
  const icbo = deviceLeakage(s.device, tjC, s.stressH);
  const leakA = (beta + 1) * icbo;
  if (s.icSetA !== undefined && s.icSetA !== null) {
    // Regulated IC: the base drive is whatever holds IC at the set point. The regulator cannot drive
    // IB below zero, so once leakage alone ((β+1)·ICBO) exceeds the set point it flows regardless.
    const target = Math.min(s.complianceA, s.icSetA * scale);
    const ib = Math.max(0, (target - leakA) / beta);
    const ic = Math.min(s.complianceA, Math.max(target, leakA));
    return { iA: ic, vOutV: s.vV, powerW: s.vV * ic + VBE_V * ib };
  }
  const ib = s.ibA * scale;
  const ic = Math.min(s.complianceA, beta * ib + leakA);
  return { iA: ic, vOutV: s.vV, powerW: s.vV * ic + VBE_V * ib };
}

/** Dissipation as a function of Tj for a socket (for steady-state solvers and tests). */
export function socketPowerAt(s: SocketState): (tjC: number) => number {
  return (tjC) => socketElectrical(s, tjC).powerW;
}

/** Largest sub-step used by stepRig: a quarter of the fastest time constant. */
export function maxSubstepS(state: RigState): number {
  let tau = state.chamberTauS;
  for (const s of state.sockets) tau = Math.min(tau, s.caseTauS);
  return Math.max(1e-3, tau / 4);
}

function lag(current: number, target: number, dtS: number, tauS: number): number {
  if (tauS <= 0) return target;
  return target + (current - target) * Math.exp(-dtS / tauS);
}

function stepSocket(s: SocketState, chamberC: number, h: number): SocketState {
  const before = socketElectrical(s, s.tjC);
  const caseC = lag(s.caseC, chamberC + s.thetaCaCPerW * before.powerW, h, s.caseTauS);
  let next: SocketState = { ...s, caseC };
  if (s.thetaCaRampCPerWPerH > 0 && isEnergised(s)) {
    next.thetaCaCPerW = Math.min(s.thetaCaMaxCPerW, s.thetaCaCPerW + (s.thetaCaRampCPerWPerH * h) / 3600);
  }
  next.tjC = caseC + s.device.thetaJcCPerW * before.powerW;
  if (!next.destroyed && next.tjC > s.device.tjMaxC + DESTROY_MARGIN_C) {
    next = { ...next, destroyed: s.device.failMode };
  }
  const now = socketElectrical(next, next.tjC);
  next.iA = now.iA;
  next.vOutV = now.vOutV;
  next.powerW = now.powerW;
  if (isEnergised(s) && !s.destroyed) next.stressH = s.stressH + h / 3600;
  return next;
}

/** Tj as the rig reads it from the socket's TSP (the sense voltage at the ADC's resolution). */
export function tspJunctionC(s: SocketState): number {
  const cal = s.device.tsp ?? DEFAULT_TSP;
  const v = Math.round(tspAt(s.tjC, cal) / TSP_RESOLUTION_V) * TSP_RESOLUTION_V;
  return junctionFromTsp(v, cal);
}

/** After a completed cycle: count it, keep its swing for the report, and steer the drive toward the planned swing. */
function completeCycle(s: SocketState, p: CycleProgram, coldTjC: number): SocketState {
  const swing = p.hotTjC === null ? null : Math.max(0, p.hotTjC - coldTjC);
  let driveScale = p.driveScale;
  if (swing !== null && swing > 0.5) {
    const step = Math.min(1.25, Math.max(0.8, (p.deltaTjC + SWING_AIM_ABOVE_K) / swing));
    driveScale = Math.min(2, Math.max(0.5, driveScale * step));
  }
  return {
    ...s,
    cycle: { ...p, phaseS: 0, hotTjC: null, driveScale },
    cycleCount: (s.cycleCount ?? 0) + 1,
    swingLowC: swing === null ? (s.swingLowC ?? null) : Math.min(s.swingLowC ?? Infinity, swing),
    swingHighC: swing === null ? (s.swingHighC ?? null) : Math.max(s.swingHighC ?? -Infinity, swing),
  };
}

/** stepSocket for a socket under a cycling program: split at the on/off switching instants. */
function stepCyclingSocket(s: SocketState, chamberC: number, h: number): SocketState {
  let cur = s;
  let left = h;
  while (left > 1e-9 && cur.cycle && isEnergised(cur)) {
    const p: CycleProgram = cur.cycle;
    const on = p.phaseS < p.onS;
    const toSwitch = (on ? p.onS : p.onS + p.offS) - p.phaseS;
    const seg = Math.min(left, toSwitch);
    cur = stepSocket(cur, chamberC, seg);
    left -= seg;
    const phaseS = p.phaseS + seg;
    if (seg < toSwitch - 1e-9) {
      cur = { ...cur, cycle: { ...p, phaseS } };
    } else if (on) {
      // End of the on-time: power off, read the hot junction from the TSP.
      cur = { ...cur, cycle: { ...p, phaseS: p.onS, hotTjC: tspJunctionC(cur) } };
      cur = withElectrical(cur);
    } else {
      cur = withElectrical(completeCycle(cur, p, tspJunctionC(cur)));
    }
  }
  return left > 1e-9 ? stepSocket(cur, chamberC, left) : cur;
}

function withElectrical(s: SocketState): SocketState {
  const e = socketElectrical(s, s.tjC);
  return { ...s, iA: e.iA, vOutV: e.vOutV, powerW: e.powerW };
}

/** The swings since the last report are cleared once a message carried them. */
export function clearSwingReports(state: RigState): RigState {
  if (!state.sockets.some((s) => s.swingLowC != null)) return state;
  return { ...state, sockets: state.sockets.map((s) => (s.swingLowC != null ? { ...s, swingLowC: null, swingHighC: null } : s)) };
}

/** Advance the whole rig by dtS stress seconds (pure; splits into stable sub-steps). */
export function stepRig(state: RigState, dtS: number): RigState {
  if (!(dtS > 0)) return state;
  const n = Math.max(1, Math.ceil(dtS / maxSubstepS(state)));
  const h = dtS / n;
  let chamberC = state.chamberC;
  let humidityPct = state.humidityPct;
  let vapourHpa = state.vapourHpa;
  let condensationS = state.condensationS;
  let sockets = state.sockets;
  for (let k = 0; k < n; k++) {
    chamberC = lag(chamberC, state.setpointC, h, state.chamberTauS);
    if (vapourHpa !== null) {
      const v = stepVapour(state, vapourHpa, chamberC, h);
      vapourHpa = v.vapourHpa;
      humidityPct = v.rhPct;
      if (v.saturated) condensationS += h;
    }
    const c = chamberC;
    sockets = sockets.map((s) => (s.cycle && isEnergised(s) ? stepCyclingSocket(s, c, h) : stepSocket(s, c, h)));
  }
  return { ...state, stressClockS: state.stressClockS + dtS, chamberC, humidityPct, vapourHpa, condensationS, sockets };
}

// ---------------------------------------------------------------------------------------------
// Demo parts, lots and devices (invented: Harrowgate Power Devices)

export interface PartModel {
  partNumber: string;
  betaRef: number;
  betaRefTC: number;
  xtb: number;
  icboRefA: number;
  icboRefTC: number;
  doublingC: number;
  thetaJcCPerW: number;
  tjMaxC: number;
  bvcboV: number;
}

/** A TO-220-class NPN power transistor. */
export const DEMO_PART: PartModel = {
  partNumber: 'HPD-T220N',
  betaRef: 80,
  betaRefTC: 25,
  xtb: 1.5,
  icboRefA: 10e-9,
  icboRefTC: 25,
  doublingC: 10,
  thetaJcCPerW: 1.5,
  tjMaxC: 150,
  bvcboV: 200,
};

export interface LotModel {
  lotCode: string;
  part: PartModel;
  hfeDriftPctPer1000h: number;
  leakageRatioPer1000h: number;
}

export const DEMO_LOTS: LotModel[] = [
  /** Healthy lot: small drift, well inside ±15 % hFE and 2× leakage at 1000 h. */
  { lotCode: 'HPD-L2403', part: DEMO_PART, hfeDriftPctPer1000h: -1.5, leakageRatioPer1000h: 1.15 },
  /** Drifting lot: hFE falls ~12 %/1000 h, leakage ×3.6 per 1000 h — fails on leakage near 1000 h. */
  { lotCode: 'HPD-L2411', part: DEMO_PART, hfeDriftPctPer1000h: -12, leakageRatioPer1000h: 3.6 },
];

/** Devices of a lot with device-to-device spread, deterministic for a (lot, seed). */
export function makeLotDevices(lot: LotModel, count: number, seed = 1, firstSerial = 1): DeviceModel[] {
  const rng = createRng(hashString(`${lot.lotCode}:${seed}`));
  const out: DeviceModel[] = [];
  for (let k = 0; k < count; k++) {
    const p = lot.part;
    out.push({
      serial: `${lot.lotCode}-${String(firstSerial + k).padStart(3, '0')}`,
      partNumber: p.partNumber,
      lotCode: lot.lotCode,
      betaRef: p.betaRef * (1 + 0.06 * gaussian(rng)),
      betaRefTC: p.betaRefTC,
      xtb: p.xtb,
      icboRefA: p.icboRefA * Math.exp(0.3 * gaussian(rng)),
      icboRefTC: p.icboRefTC,
      doublingC: p.doublingC,
      thetaJcCPerW: p.thetaJcCPerW * (1 + 0.05 * gaussian(rng)),
      tjMaxC: p.tjMaxC,
      hfeDriftPctPer1000h: lot.hfeDriftPctPer1000h * (1 + 0.2 * gaussian(rng)),
      leakageRatioPer1000h: Math.max(1, lot.leakageRatioPer1000h * (1 + 0.1 * gaussian(rng))),
      failMode: rng() < 0.8 ? 'short' : 'open',
    });
  }
  return out;
}

export interface SocketSetup {
  device: DeviceModel;
  mode?: BiasMode;
  thetaCaCPerW?: number;
  caseTauS?: number;
  /** Heat-sink degradation, °C/W per stress hour, up to thetaCaMaxCPerW. */
  thetaCaRampCPerWPerH?: number;
  thetaCaMaxCPerW?: number;
  vV?: number;
  ibA?: number;
  /** Regulated collector current under powered bias (instead of a forced IB). */
  icA?: number | null;
  complianceA?: number;
  biasOn?: boolean;
}

export interface RigSetup {
  rigCode: string;
  sockets: SocketSetup[];
  chamberC?: number;
  setpointC?: number;
  /** Oven lag, stress seconds (default 0.5 stress-hour). */
  chamberTauS?: number;
  humidityPct?: number | null;
  maxTempC?: number;
  humidityCapable?: boolean;
}

export const DEFAULTS = {
  chamberTauS: 1800,
  caseTauS: 120,
  /** A socket on a proper heat sink. */
  thetaCaCPerW: 2,
  /** A socket with next to no heat sinking (runs away under the default powered bias). */
  poorThetaCaCPerW: 24,
  poweredVceV: 20,
  poweredIbA: 0.005,
  reverseV: 160,
  complianceA: 2,
  maxTempC: 250,
} as const;

export function createRigState(setup: RigSetup): RigState {
  const chamberC = setup.chamberC ?? 25;
  const humidity = setup.humidityPct ?? null;
  const humidityCapable = setup.humidityCapable ?? humidity !== null;
  const vapourHpa = !humidityCapable ? null : humidity !== null ? vapourPressureHpa(chamberC, humidity) : ROOM_VAPOUR_HPA;
  return {
    rigCode: setup.rigCode,
    stressClockS: 0,
    chamberC,
    setpointC: setup.setpointC ?? chamberC,
    chamberTauS: setup.chamberTauS ?? DEFAULTS.chamberTauS,
    humidityPct: vapourHpa === null ? null : relativeHumidityPct(chamberC, vapourHpa),
    humiditySetpointPct: humidity,
    vapourHpa,
    condensationS: 0,
    maxTempC: setup.maxTempC ?? DEFAULTS.maxTempC,
    humidityCapable,
    sockets: setup.sockets.map((s, i) => {
      const mode = s.mode ?? 'powered';
      const socket: SocketState = {
        i,
        device: s.device,
        mode,
        thetaCaCPerW: s.thetaCaCPerW ?? DEFAULTS.thetaCaCPerW,
        caseTauS: s.caseTauS ?? DEFAULTS.caseTauS,
        thetaCaRampCPerWPerH: s.thetaCaRampCPerWPerH ?? 0,
        thetaCaMaxCPerW: s.thetaCaMaxCPerW ?? s.thetaCaCPerW ?? DEFAULTS.thetaCaCPerW,
        biasOn: s.biasOn ?? false,
        vV: s.vV ?? (mode === 'powered' ? DEFAULTS.poweredVceV : DEFAULTS.reverseV),
        ibA: s.ibA ?? DEFAULTS.poweredIbA,
        icSetA: mode === 'powered' ? (s.icA ?? null) : null,
        complianceA: s.complianceA ?? DEFAULTS.complianceA,
        tripped: false,
        tripReason: null,
        destroyed: null,
        caseC: chamberC,
        tjC: chamberC,
        iA: 0,
        vOutV: 0,
        powerW: 0,
        stressH: 0,
      };
      const e = socketElectrical(socket, chamberC);
      return { ...socket, iA: e.iA, vOutV: e.vOutV, powerW: e.powerW };
    }),
  };
}

// ---------------------------------------------------------------------------------------------
// Read-point measurements

export interface ReadPointOptions {
  /** Test temperature of the electrical measurement (°C). */
  testTC?: number;
  /** 1-σ measurement repeatability, % of reading. */
  noisePct?: number;
  seed?: number;
}

export interface ReadPointMeasurement {
  serial: string;
  lotCode: string;
  partNumber: string;
  readPointH: number;
  hfe: number;
  icboA: number;
}

/**
 * What a parametric tester would read for this device after `stressHours` of stress: hFE and ICBO
 * at the test temperature, with the lot's drift and a small, deterministic repeatability error.
 * Pure — the demo read-point CSVs are generated from it.
 */
export function measureReadPoint(device: DeviceModel, stressHours: number, opts: ReadPointOptions = {}): ReadPointMeasurement {
  const testTC = opts.testTC ?? 25;
  const noise = (opts.noisePct ?? 0.5) / 100;
  const rng = createRng(hashString(`${device.serial}@${stressHours}#${opts.seed ?? 1}`));
  const hfe = deviceGain(device, testTC, stressHours) * (1 + noise * gaussian(rng));
  const icbo = deviceLeakage(device, testTC, stressHours) * (1 + noise * gaussian(rng));
  return {
    serial: device.serial,
    lotCode: device.lotCode,
    partNumber: device.partNumber,
    readPointH: stressHours,
    hfe: Number(hfe.toPrecision(4)),
    icboA: Number(icbo.toPrecision(4)),
  };
}

/** Every device at every read point (default 0 / 168 / 500 / 1000 h — common practice). */
export function readPointTable(
  devices: DeviceModel[],
  readPointsH: number[] = [0, 168, 500, 1000],
  opts: ReadPointOptions = {},
): ReadPointMeasurement[] {
  return readPointsH.flatMap((h) => devices.map((d) => measureReadPoint(d, h, opts)));
}

export const READ_POINT_CSV_HEADER = 'serial,lot,part_number,read_point_h,hfe,icbo_a';

export function readPointCsv(rows: ReadPointMeasurement[]): string {
  const lines = rows.map((r) => [r.serial, r.lotCode, r.partNumber, r.readPointH, r.hfe, r.icboA].join(','));
  return [READ_POINT_CSV_HEADER, ...lines].join('\n') + '\n';
}
