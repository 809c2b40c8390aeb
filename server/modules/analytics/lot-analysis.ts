/**
 * Lot figures from device drift: distributions per read point, the typical device's fitted path,
 * and FIT figures from a plan's exposure. The verdict itself is shared/verdict's judgeLot.
 * Pure functions; statistics from shared/stats, acceleration and χ² bounds from shared/reliability.
 */
import type { FitFigures, LotDevice, LotReadPointStats, TrendFit } from '../../../shared/schemas/analytics';
import type { DeviceDriftView } from '../../../shared/schemas/measurements';
import type { Criteria } from '../../../shared/schemas/plans';
import { isPoweredKindName } from '../../../shared/domain/stress';
import { constantsUsed } from '../../../shared/reliability';
import {
  mechanismExposure,
  mechanismFit,
  type DeviceExposure,
  type MechanismExposure,
  type MechanismPlan,
} from '../../../shared/reliability/mechanisms';
import { lotDriftSummary, pseudoFailureTime } from '../../../shared/stats';

export const LOT_CAUTION =
  'Projections extrapolate a straight-line fit beyond the measured read points, and each FIT figure holds for the one ' +
  'failure mechanism its stress accelerates, with the model parameters named beside it; confirm with failure analysis ' +
  'before shipping or holding a lot.';

export interface LotCoreInput {
  lot: { id: string; code: string; deviceTypeId: string; partNumber: string; dateCode: string };
  run: { id: string; code: string; state: string; stressHours: number } | null;
  plan: {
    id: string;
    name: string;
    kind: string;
    durationH: number;
    acceptNumber: number;
    sampleSize: number;
    chamberC: number;
    eaEv: number;
    useC: number;
    /** Stress temperature for acceleration: chamber, or the plan check's junction temperature on powered kinds. */
    stressC: number;
    stressBasis: string;
    readPointsH: number[];
    criteria: Criteria;
  } | null;
  /** Drift of this lot's devices on the run (from runDrift), socket order. */
  devices: DeviceDriftView[];
}

export interface LotCore extends LotCoreInput {
  readPoints: LotReadPointStats[];
  trends: TrendFit[];
  lotDevices: LotDevice[];
  fails: number;
  latestH: number | null;
  normalisedReadings: number;
  pseudoFailureH: number | null;
  pseudoFailureParameter: 'hfe' | 'icbo' | 'vcesat' | null;
}

/**
 * What judging, FIT and the responses read of a lot: everything but the per-reading drift views
 * (`devices`), which at lab scale are most of the memory (~60 MB for 100 lots × 77 devices) and
 * are only needed while lotCore runs.
 */
export type LotFigures = Omit<LotCore, 'devices'>;

const summary = (xs: number[]) => (xs.length ? lotDriftSummary(xs) : null);
const round = (x: number, d = 4) => +x.toPrecision(d);

/** Per-read-point distributions and the device table of one lot. */
export function lotCore(input: LotCoreInput): LotCore {
  const { plan, devices } = input;
  const measuredHours = new Set<number>();
  for (const d of devices) for (const r of d.readPoints) measuredHours.add(r.readPointH);
  const hours = [...new Set([...(plan?.readPointsH ?? []), ...measuredHours])].sort((a, b) => a - b);
  const normalisedReadings = devices.reduce((n, d) => n + d.readPoints.filter((r) => r.hfeNormalised).length, 0);

  const readPoints: LotReadPointStats[] = [];
  for (const h of hours) {
    const at = devices.map((d) => ({ d, r: d.readPoints.find((x) => x.readPointH === h) })).filter((x) => x.r);
    if (!at.length) continue;
    const param = (name: 'hfe' | 'icbo' | 'vcesat') =>
      at.map((x) => x.r!.parameters?.find((p) => p.parameter === name)).filter((p) => p && p.pass !== null);
    const hfe = param('hfe')
      .map((p) => p!.changePct!)
      .filter((v) => v !== null && Number.isFinite(v));
    const icbo = param('icbo')
      .map((p) => p!.ratio!)
      .filter((v) => v !== null && Number.isFinite(v));
    const vce = param('vcesat')
      .map((p) => p!.delta! * 1000)
      .filter((v) => Number.isFinite(v));
    readPoints.push({
      hours: h,
      devicesMeasured: at.length,
      late: at.filter((x) => x.r!.late).length,
      hfeChangePct: h > 0 ? summary(hfe) : null,
      icboRatio: h > 0 ? summary(icbo) : null,
      vcesatShiftMv: h > 0 ? summary(vce) : null,
      failing: at.filter((x) => x.r!.pass === false).length,
      cumulativeFails: devices.filter((d) => d.firstFailedH !== null && d.firstFailedH <= h).length,
    });
  }

  const lotDevices: LotDevice[] = devices.map((d) => {
    const latest = [...d.readPoints].filter((r) => r.readPointH > 0 && r.parameters).pop() ?? null;
    const p = (name: 'hfe' | 'icbo' | 'vcesat') => latest?.parameters?.find((x) => x.parameter === name) ?? null;
    const failedParameters = [...new Set(d.readPoints.flatMap((r) => r.failed))];
    return {
      deviceId: d.deviceId,
      serial: d.serial,
      socketIndex: d.socketIndex,
      status: d.status,
      firstFailedH: d.firstFailedH,
      failedParameters,
      latestH: latest?.readPointH ?? null,
      hfeChangePct: p('hfe')?.changePct ?? null,
      icboRatio: p('icbo')?.ratio ?? null,
      vcesatShiftMv: p('vcesat')?.delta != null ? p('vcesat')!.delta! * 1000 : null,
      hfeNormalised: d.readPoints.some((r) => r.hfeNormalised),
      late: d.readPoints.some((r) => r.late),
    };
  });

  const trends = plan ? lotTrends(readPoints, devices, plan.criteria, Math.max(plan.durationH, hours[hours.length - 1] ?? 0)) : [];
  const crossing = trends.filter((t) => t.pseudoFailureH !== null).sort((a, b) => a.pseudoFailureH! - b.pseudoFailureH!)[0];
  const withData = readPoints.filter((r) => r.hours > 0 && r.hfeChangePct);
  return {
    ...input,
    readPoints,
    trends,
    lotDevices,
    fails: devices.filter((d) => d.firstFailedH !== null).length,
    latestH: withData.length ? withData[withData.length - 1].hours : readPoints.length ? readPoints[readPoints.length - 1].hours : null,
    normalisedReadings,
    pseudoFailureH: crossing?.pseudoFailureH ?? null,
    pseudoFailureParameter: crossing?.parameter ?? null,
  };
}

/**
 * The lot's typical device: mean hFE change, median ICBO ratio and mean VCE(sat) shift per read
 * point, each fitted through the origin and solved for the limit (NIST e-Handbook §8.4.2.3).
 * The ICBO limit for the typical device is the ratio the criteria allow at the lot's median
 * time-zero leakage: max(multiple, 1 + floor / I0).
 */
export function lotTrends(readPoints: LotReadPointStats[], devices: DeviceDriftView[], c: Criteria, horizonH: number): TrendFit[] {
  const out: TrendFit[] = [];
  const steps = 20;
  const lineOf = (f: (t: number) => number) =>
    Array.from({ length: steps + 1 }, (_, i) => (horizonH * i) / steps).map((t) => ({ hours: t, value: round(f(t), 6) }));
  const fit = (
    parameter: TrendFit['parameter'],
    model: TrendFit['model'],
    points: Array<{ hours: number; value: number }>,
    limitFor: (slopeSign: number) => number | null,
  ) => {
    if (!points.length) return;
    const hours = points.map((p) => p.hours);
    const changes = points.map((p) => p.value);
    const probe = pseudoFailureTime({ hours, changes, limit: model === 'log-ratio-origin' ? 2 : 1, model });
    const limit = limitFor(Math.sign(probe.slope));
    const pf = limit === null ? { hours: null, slope: probe.slope } : pseudoFailureTime({ hours, changes, limit, model });
    out.push({
      parameter,
      model,
      points,
      slopePerHour: probe.slope,
      limit: limit ?? (model === 'log-ratio-origin' ? 1 : 0),
      pseudoFailureH: pf.hours,
      line: lineOf((t) => (model === 'log-ratio-origin' ? Math.exp(probe.slope * t) : probe.slope * t)),
    });
  };
  const later = readPoints.filter((r) => r.hours > 0);
  fit(
    'hfe',
    'linear-origin',
    later.filter((r) => r.hfeChangePct).map((r) => ({ hours: r.hours, value: r.hfeChangePct!.mean })),
    (s) => (s === 0 ? null : s * c.hfeChangePct),
  );
  const initials = devices
    .map((d) => d.readPoints.find((r) => r.readPointH === 0)?.icboA)
    .filter((v): v is number => typeof v === 'number' && v > 0)
    .sort((a, b) => a - b);
  if (initials.length) {
    const i0 = initials[Math.floor((initials.length - 1) / 2)];
    const ratioLimit = 1 + Math.max((c.leakageMultiple - 1) * i0, c.leakageFloorA) / i0;
    fit(
      'icbo',
      'log-ratio-origin',
      later.filter((r) => r.icboRatio && r.icboRatio.median > 0).map((r) => ({ hours: r.hours, value: r.icboRatio!.median })),
      (s) => (s > 0 ? ratioLimit : null),
    );
  }
  fit(
    'vcesat',
    'linear-origin',
    later.filter((r) => r.vcesatShiftMv).map((r) => ({ hours: r.hours, value: r.vcesatShiftMv!.mean })),
    (s) => (s === 0 ? null : s * c.vcesatShiftV * 1000),
  );
  return out;
}

/**
 * FIT at 60 % and 90 % for the plan kind's failure mechanism, from the devices the verdict counts:
 * each device's equivalent hours integrate the mechanism's acceleration over its own credited
 * hours at the junction estimated from its socket's telemetry (shared/reliability/mechanisms),
 * chi-square (JESD85). `unavailable` says why there is none (e.g. cycles not recorded).
 */
export function planFit(p: { plan: MechanismPlan; devices: readonly DeviceExposure[]; failures: number }): {
  fit: FitFigures | null;
  unavailable: string | null;
} {
  const x = mechanismExposure(p.plan, p.devices);
  if (x.unavailable) return { fit: null, unavailable: x.unavailable };
  return { fit: exposureFit(x, p.failures, p.plan), unavailable: null };
}

/** A stress basis in words: where the devices' junction histories came from. */
export function junctionBasis(x: Pick<MechanismExposure, 'devicesFromTelemetry' | 'devicesFromChamber'>): string {
  const n = (k: number) => `${k} device${k === 1 ? '' : 's'}`;
  if (!x.devicesFromChamber) return `estimated junction from socket telemetry (${n(x.devicesFromTelemetry)})`;
  if (!x.devicesFromTelemetry) return `chamber temperature (no junction record, ${n(x.devicesFromChamber)})`;
  return `estimated junction from socket telemetry (${n(x.devicesFromTelemetry)}), chamber temperature where none was recorded (${n(x.devicesFromChamber)})`;
}

function exposureFit(x: MechanismExposure, failures: number, plan: { eaEv: number; useC: number; chamberC: number }): FitFigures | null {
  const f = mechanismFit(x, failures);
  if (!f) return null;
  const k = constantsUsed();
  const stressBasis = junctionBasis(x);
  return {
    failures,
    devices: x.devices,
    hoursEach: x.deviceHours / x.devices,
    accelerationFactor: x.equivalentDeviceHours / x.deviceHours,
    deviceHours: x.deviceHours,
    equivalentDeviceHours: x.equivalentDeviceHours,
    fit60: f.f60.fit,
    fit90: f.f90.fit,
    chiSquare60: f.f60.chiSquare,
    chiSquare90: f.f90.chiSquare,
    constants: {
      boltzmannEvPerK: k.boltzmannEvPerK,
      kelvinOffset: k.kelvinOffset,
      eaEv: plan.eaEv,
      useC: plan.useC,
      stressC: x.tjMeanC ?? plan.chamberC,
      stressBasis,
      source: k.boltzmannSource,
    },
    method: `${x.model}; chi-square upper bound (JESD85)`,
    mechanism: x.mechanism,
    mechanismLabel: x.label,
    model: x.model,
    parameters: x.parameters,
    junction: {
      devicesFromTelemetry: x.devicesFromTelemetry,
      devicesFromChamber: x.devicesFromChamber,
      tjMeanC: x.tjMeanC,
      tjMinC: x.tjMinC,
      tjMaxC: x.tjMaxC,
    },
  };
}

/**
 * The temperature that accelerates the devices: the chamber on unpowered stresses (reverse bias,
 * humidity), the steady junction temperature from the plan check on powered ones (operating life,
 * intermittent life), where self-heating puts the junction far above the chamber.
 */
export function stressTemperature(plan: { kind: string; chamberC: number; checkResult?: { derived?: { tjC?: unknown } } | null }): {
  stressC: number;
  stressBasis: string;
} {
  const tj = plan.checkResult?.derived?.tjC;
  if (isPoweredKindName(plan.kind) && typeof tj === 'number' && Number.isFinite(tj) && tj > plan.chamberC) {
    return { stressC: tj, stressBasis: 'junction temperature from the plan check (powered stress)' };
  }
  return { stressC: plan.chamberC, stressBasis: 'chamber temperature' };
}

/** FIT of a temperature-mechanism exposure of `devices` × `hoursEach` held at one temperature (worked examples, tests). */
export function fitFigures(p: {
  failures: number;
  devices: number;
  hoursEach: number;
  eaEv: number;
  useC: number;
  stressC: number;
}): FitFigures {
  const plan: MechanismPlan = { kind: 'htrb', eaEv: p.eaEv, useC: p.useC, chamberC: p.stressC, humidityPct: null };
  const devices = Array.from({ length: p.devices }, () => ({
    creditedHours: p.hoursEach,
    segments: [{ hours: p.hoursEach, tjC: p.stressC }],
  }));
  const fit = exposureFit(mechanismExposure(plan, devices), p.failures, plan);
  if (!fit) throw new RangeError('devices and hours must be positive');
  return fit;
}
