/**
 * Failure rate per failure mechanism: each stress kind accelerates one mechanism, with its own
 * model, and a FIT is only ever computed from the equivalent hours of one mechanism (a THB lot's
 * humidity hours and an HTRB lot's temperature hours are never added together).
 *
 * Declared once here (STYLE.md "One rule, one place"): which kind stresses which mechanism, the
 * model of each, and the model parameters the product assumes where a plan gives none. Pure.
 *
 * Each device's equivalent hours come from its own temperature history (`StressSegment`s: credited
 * hours at the junction estimated from its socket's telemetry), not from a plan's prediction. A
 * device with no such record (runs accrued before the record existed) is credited at the chamber
 * temperature: never more than it can have seen on a reverse-bias stress, and an under-credit on a
 * powered one (the junction sits above the chamber), which only raises the FIT bound.
 */
import type { PlanKind } from '../domain/stress';
import { MECHANISM_LABEL, MECHANISM_OF_KIND, type ModelParameter, type StressMechanism } from './mechanism-names';
import { coffinMansonFactor, equivalentHumidityHours, equivalentStressHours, fitUpperBoundDetails, type StressSegment } from './index';

export {
  MECHANISM_LABEL,
  MECHANISM_OF_KIND,
  STRESS_MECHANISMS,
  describeParameters,
  type ModelParameter,
  type StressMechanism,
} from './mechanism-names';

/** Peck humidity exponent n (recalled value, ≈ 2.66 — from memory, not checked against a text). */
export const PECK_HUMIDITY_EXPONENT = 2.66;
/** Use-condition relative humidity the humidity FIT is stated at (an assumed field condition, common practice to state it). */
export const PECK_USE_RH_PCT = 60;
/** Coffin–Manson exponent for wire-bond / die-attach fatigue (NIST e-Handbook §8.1.5 example uses 2; exponents from memory). */
export const COFFIN_MANSON_EXPONENT = 2;
/** Use-condition junction swing (K) and cycles per day the cycling FIT is stated at (assumed field use). */
export const COFFIN_MANSON_USE_DELTA_TJ_C = 50;
export const FIELD_CYCLES_PER_DAY = 1;
/**
 * Temperature cycling (air-to-air, JESD22-A104): Coffin–Manson exponent for solder / die-attach
 * fatigue of the package (≈ 2 for ductile solder joints, NIST e-Handbook §8.1.5 example; from memory —
 * the lab should state its own), the field's daily ambient swing and cycles per day the TC FIT is
 * stated at (assumed field use, common practice to state it).
 */
export const TC_COFFIN_MANSON_EXPONENT = 2;
export const TC_USE_DELTA_T_C = 40;
export const TC_FIELD_CYCLES_PER_DAY = 1;
/**
 * Why autoclave / unbiased HAST gives no FIT: Peck's model was fitted to biased humidity life
 * (electrolytic corrosion needs the bias THB applies); in saturated pressurised steam without bias
 * the failures are package-integrity ones (moisture ingress, delamination) with no accepted field
 * acceleration for a discrete in use. Its hours are a pass/fail construction check (JESD47 uses it so,
 * from memory), never added to THB's humidity hours.
 */
export const UNBIASED_HUMIDITY_NO_FIT =
  'Autoclave and unbiased HAST check the package’s moisture integrity: Peck’s model describes biased corrosion, so no FIT is given (pass/fail on the lot’s criteria).';

/** Cycles a device saw and its measured junction swing (from the power-cycling accrual). */
export interface CyclingExposure {
  cycles: number;
  deltaTjC: number;
}

/** What one device contributes: its credited hours and the history they were earned at. */
export interface DeviceExposure {
  creditedHours: number;
  /** Junction (and humidity) history of the credited hours; null when none was recorded. */
  segments: readonly StressSegment[] | null;
  /** Power cycling only; null or absent until cycles and ΔTj are recorded per socket. */
  cycling?: CyclingExposure | null;
}

export interface MechanismPlan {
  kind: PlanKind;
  eaEv: number;
  useC: number;
  chamberC: number;
  humidityPct: number | null;
}

export interface MechanismExposure {
  mechanism: StressMechanism;
  label: string;
  model: string;
  parameters: ModelParameter[];
  devices: number;
  deviceHours: number;
  /** Device-hours at the use condition (Σ over devices). */
  equivalentDeviceHours: number;
  /** Devices whose history came from telemetry, and those credited at the chamber temperature. */
  devicesFromTelemetry: number;
  devicesFromChamber: number;
  /** Hour-weighted mean, lowest and highest estimated junction over the credited hours. */
  tjMeanC: number | null;
  tjMinC: number | null;
  tjMaxC: number | null;
  /** Why no equivalent hours could be given (then equivalentDeviceHours is 0). */
  unavailable: string | null;
}

const SEGMENT_HOURS_EPS = 1e-6;

/** The device's history, with any credited hours it has no record of put at the chamber temperature. */
export function deviceSegments(d: DeviceExposure, plan: MechanismPlan): { segments: StressSegment[]; fromTelemetry: boolean } {
  const credited = Math.max(0, d.creditedHours);
  const recorded = d.segments ?? [];
  const recordedH = recorded.reduce((s, x) => s + x.hours, 0);
  const out = recorded.map((x) => ({ ...x }));
  if (credited - recordedH > SEGMENT_HOURS_EPS) {
    out.push({ hours: credited - recordedH, tjC: plan.chamberC, rhPct: plan.humidityPct });
  }
  return { segments: out, fromTelemetry: recorded.length > 0 && recordedH > 0 };
}

/** Equivalent device-hours of one plan's devices for the plan kind's mechanism. */
export function mechanismExposure(plan: MechanismPlan, devices: readonly DeviceExposure[]): MechanismExposure {
  const mechanism = MECHANISM_OF_KIND[plan.kind];
  const deviceHours = devices.reduce((s, d) => s + Math.max(0, d.creditedHours), 0);
  let fromTelemetry = 0;
  let tjSum = 0;
  let tjHours = 0;
  let tjMin = Infinity;
  let tjMax = -Infinity;
  const histories = devices.map((d) => {
    const h = deviceSegments(d, plan);
    if (h.fromTelemetry) fromTelemetry++;
    for (const s of h.segments) {
      if (!(s.hours > 0)) continue;
      tjSum += s.tjC * s.hours;
      tjHours += s.hours;
      tjMin = Math.min(tjMin, s.tjC);
      tjMax = Math.max(tjMax, s.tjC);
    }
    return h.segments;
  });
  const common = {
    mechanism,
    label: MECHANISM_LABEL[mechanism],
    devices: devices.length,
    deviceHours,
    devicesFromTelemetry: fromTelemetry,
    devicesFromChamber: devices.length - fromTelemetry,
    tjMeanC: tjHours > 0 ? tjSum / tjHours : null,
    tjMinC: tjHours > 0 ? tjMin : null,
    tjMaxC: tjHours > 0 ? tjMax : null,
  };
  const ea: ModelParameter = { name: 'Ea', value: plan.eaEv, unit: 'eV', source: 'plan' };
  const use: ModelParameter = { name: 'use temperature', value: plan.useC, unit: '°C', source: 'plan' };
  if (mechanism === 'unbiased-humidity') {
    return {
      ...common,
      model: 'none (package-integrity check, pass/fail)',
      parameters: [],
      equivalentDeviceHours: 0,
      unavailable: UNBIASED_HUMIDITY_NO_FIT,
    };
  }
  if (mechanism === 'temperature' || mechanism === 'storage') {
    const eq = histories.reduce((s, segments) => s + equivalentStressHours({ segments, eaEv: plan.eaEv, useC: plan.useC }), 0);
    return {
      ...common,
      model:
        mechanism === 'storage'
          ? 'Arrhenius AF = exp[(Ea/k)(1/T_use − 1/T)] at the storage chamber’s temperature (unbiased: the device is at the chamber; JEDEC JEP122)'
          : 'Arrhenius AF = exp[(Ea/k)(1/T_use − 1/Tj)] at each device’s estimated junction (JEDEC JEP122)',
      parameters: [ea, use],
      equivalentDeviceHours: eq,
      unavailable: null,
    };
  }
  if (mechanism === 'humidity') {
    const n = PECK_HUMIDITY_EXPONENT;
    const eq = histories.reduce(
      (s, segments) => s + equivalentHumidityHours({ segments, eaEv: plan.eaEv, n, useC: plan.useC, rhUsePct: PECK_USE_RH_PCT }),
      0,
    );
    return {
      ...common,
      model: 'Peck AF = (RH/RH_use)^n · exp[(Ea/k)(1/T_use − 1/Tj)] at each device’s junction and the chamber humidity',
      parameters: [
        ea,
        use,
        { name: 'n', value: n, unit: '', source: 'assumed, from memory' },
        { name: 'use humidity', value: PECK_USE_RH_PCT, unit: '% RH', source: 'assumed field condition' },
      ],
      equivalentDeviceHours: eq,
      unavailable: null,
    };
  }
  const chamberSwing = mechanism === 'thermal-cycling';
  const m = chamberSwing ? TC_COFFIN_MANSON_EXPONENT : COFFIN_MANSON_EXPONENT;
  const useDelta = chamberSwing ? TC_USE_DELTA_T_C : COFFIN_MANSON_USE_DELTA_TJ_C;
  const perDay = chamberSwing ? TC_FIELD_CYCLES_PER_DAY : FIELD_CYCLES_PER_DAY;
  const parameters: ModelParameter[] = [
    { name: 'm', value: m, unit: '', source: 'assumed, from memory' },
    { name: chamberSwing ? 'use ΔT' : 'use ΔTj', value: useDelta, unit: 'K', source: 'assumed field condition' },
    { name: 'use cycles per day', value: perDay, unit: '', source: 'assumed field condition' },
  ];
  const model = chamberSwing
    ? 'Coffin–Manson AF = (ΔT/ΔT_use)^m on the smallest load swing the chamber reached per device, field hours = equivalent cycles × 24 h / cycles per day'
    : 'Coffin–Manson AF = (ΔTj/ΔTj_use)^m per device, field hours = equivalent cycles × 24 h / cycles per day';
  const eqCycles = equivalentCycles(devices, m, useDelta);
  if (eqCycles === null) {
    return {
      ...common,
      model,
      parameters,
      equivalentDeviceHours: 0,
      unavailable: chamberSwing
        ? 'Cycle counts and the load’s temperature swing are not recorded for every device yet: no temperature-cycling FIT is given.'
        : 'Cycle counts and the junction swing (ΔTj) are not recorded for every device yet: no power-cycling FIT is given.',
    };
  }
  return { ...common, model, parameters, equivalentDeviceHours: (eqCycles * 24) / perDay, unavailable: null };
}

/** Σ cycles · (ΔTj/ΔTj_use)^m over the devices, or null when any device has no cycle record. */
export function equivalentCycles(devices: readonly DeviceExposure[], m: number, useDeltaTjC: number): number | null {
  let sum = 0;
  for (const d of devices) {
    const c = d.cycling;
    // A device that counted no cycles (its run not yet cycling) adds none; it needs no swing.
    if (c && c.cycles === 0) continue;
    if (!c || !Number.isFinite(c.cycles) || c.cycles < 0 || !(c.deltaTjC > 0)) return null;
    sum += c.cycles * coffinMansonFactor({ deltaTTestC: c.deltaTjC, deltaTUseC: useDeltaTjC, m });
  }
  return sum;
}

/** FIT bounds at 60 % and 90 % from one mechanism's equivalent device-hours (chi-square, JESD85); null when unavailable. */
export function mechanismFit(x: MechanismExposure, failures: number) {
  if (x.unavailable || !(x.devices > 0 && x.deviceHours > 0 && x.equivalentDeviceHours > 0)) return null;
  const base = {
    failures,
    devices: x.devices,
    hoursEach: x.deviceHours / x.devices,
    accelerationFactor: x.equivalentDeviceHours / x.deviceHours,
  };
  return { f60: fitUpperBoundDetails({ ...base, confidence: 0.6 }), f90: fitUpperBoundDetails({ ...base, confidence: 0.9 }) };
}
