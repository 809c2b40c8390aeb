/**
 * Lot-level judgement from device drift: distributions per read point, the typical device's
 * fitted path and pseudo-failure time, comparison with other lots of the same device type, the
 * verdict with its reasons, and FIT figures. Pure functions; statistics from shared/stats,
 * acceleration and χ² bounds from shared/reliability.
 */
import type {
  ControlCheck,
  FitFigures,
  LotDevice,
  LotReadPointStats,
  LotVerdict,
  TrendFit,
} from '../../../shared/schemas/analytics';
import type { DeviceDriftView } from '../../../shared/schemas/measurements';
import type { Criteria } from '../../../shared/schemas/plans';
import { isPoweredKindName } from '../../../shared/domain/stress';
import { arrheniusFactor, constantsUsed, fitUpperBoundDetails } from '../../../shared/reliability';
import { individualsChart, lotDriftSummary, pseudoFailureTime, runRuleViolations } from '../../../shared/stats';

export const LOT_CAUTION =
  'Projections extrapolate a straight-line fit beyond the measured read points and the FIT figures assume a single ' +
  'thermally activated mechanism (Arrhenius); confirm with failure analysis before shipping or holding a lot.';

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
    const hfe = param('hfe').map((p) => p!.changePct!).filter((v) => v !== null && Number.isFinite(v));
    const icbo = param('icbo').map((p) => p!.ratio!).filter((v) => v !== null && Number.isFinite(v));
    const vce = param('vcesat').map((p) => p!.delta! * 1000).filter((v) => Number.isFinite(v));
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
  const lineOf = (f: (t: number) => number) => Array.from({ length: steps + 1 }, (_, i) => (horizonH * i) / steps).map((t) => ({ hours: t, value: round(f(t), 6) }));
  const fit = (parameter: TrendFit['parameter'], model: TrendFit['model'], points: Array<{ hours: number; value: number }>, limitFor: (slopeSign: number) => number | null) => {
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

/** Value compared across lots: mean hFE change (%) or median ICBO ratio at a read point. */
export function controlValue(core: LotFigures, parameter: 'hfe' | 'icbo', h: number): number | null {
  const rp = core.readPoints.find((r) => r.hours === h);
  if (!rp) return null;
  if (parameter === 'hfe') return rp.hfeChangePct?.mean ?? null;
  return rp.icboRatio?.median ?? null;
}

/**
 * This lot against the other lots of its device type (same stress kind) at its latest read point:
 * individuals-chart limits from the other lots (mean ± 2.66·MR̄, Montgomery), then the Western
 * Electric run rules on the sequence "other lots …, this lot"; only patterns that include this
 * lot count. Needs at least two other lots measured at that read point.
 */
export function controlChecks(core: LotFigures, others: LotFigures[]): ControlCheck[] {
  const h = core.latestH;
  if (h === null || h === 0 || !core.plan) return [];
  const peers = others
    .filter((o) => o.lot.id !== core.lot.id && o.lot.deviceTypeId === core.lot.deviceTypeId && o.plan?.kind === core.plan!.kind)
    .sort((a, b) => a.lot.code.localeCompare(b.lot.code));
  const out: ControlCheck[] = [];
  for (const parameter of ['hfe', 'icbo'] as const) {
    const value = controlValue(core, parameter, h);
    if (value === null) continue;
    const reference = peers
      .map((o) => ({ lotId: o.lot.id, lotCode: o.lot.code, value: controlValue(o, parameter, h) }))
      .filter((x): x is { lotId: string; lotCode: string; value: number } => x.value !== null);
    const base = { parameter, readPointH: h, value, reference };
    if (reference.length < 2) {
      out.push({ ...base, chart: null, violations: [], outOfControl: false, note: `Needs at least two other ${core.lot.partNumber} lots measured at ${h} h; ${reference.length} found.` });
      continue;
    }
    const chart = individualsChart(reference.map((r) => r.value));
    if (!(chart.sigma > 0)) {
      out.push({ ...base, chart, violations: [], outOfControl: false, note: 'The other lots agree exactly, so there is no spread to judge against.' });
      continue;
    }
    const last = reference.length;
    const violations = runRuleViolations([...reference.map((r) => r.value), value], { mean: chart.mean, sigma: chart.sigma })
      .filter((v) => v.indices.includes(last))
      .map((v) => ({ rule: v.rule, description: v.description.replace(`point ${last + 1}`, 'this lot') }));
    const outside = value > chart.ucl || value < chart.lcl;
    out.push({ ...base, chart, violations, outOfControl: outside || violations.length > 0, note: null });
  }
  return out;
}

const PARAM_LABEL = { hfe: 'hFE', icbo: 'ICBO', vcesat: 'VCE(sat)' } as const;
const fmtH = (h: number) => `${Math.round(h).toLocaleString('en-GB')} h`;

/** The verdict and its reasons, most important first. */
export function judgeLot(core: LotFigures, control: ControlCheck[]): { verdict: LotVerdict; reasons: string[] } {
  if (!core.run || !core.plan) return { verdict: 'untested', reasons: ['This lot has not been on a stress run yet.'] };
  const { plan, run } = core;
  const reasons: string[] = [];
  /** Context that does not decide the verdict; listed after the reasons that do. */
  const info: string[] = [];
  const failedDevices = core.lotDevices.filter((d) => d.firstFailedH !== null);
  const failed = failedDevices.length > plan.acceptNumber;
  if (failedDevices.length) {
    const list = failedDevices
      .slice(0, 5)
      .map((d) => `${d.serial} at ${fmtH(d.firstFailedH!)} (${d.failedParameters.map((p) => PARAM_LABEL[p]).join(', ')})`)
      .join('; ');
    reasons.push(
      `${failedDevices.length} device${failedDevices.length === 1 ? '' : 's'} failed the plan's criteria, accept number ${plan.acceptNumber}: ${list}${failedDevices.length > 5 ? '; …' : ''}.`,
    );
  }
  let drifting = false;
  if (core.pseudoFailureH !== null && core.pseudoFailureParameter) {
    const t = core.trends.find((x) => x.parameter === core.pseudoFailureParameter)!;
    const lim = t.model === 'log-ratio-origin' ? `${round(t.limit, 3)}× its time-zero value` : t.parameter === 'vcesat' ? `${round(t.limit, 3)} mV` : `${round(t.limit, 3)} %`;
    if (core.pseudoFailureH < plan.durationH) {
      drifting = true;
      reasons.push(
        `The typical device's ${PARAM_LABEL[t.parameter]} is projected to reach ${lim} at ${fmtH(core.pseudoFailureH)}, before the plan's ${fmtH(plan.durationH)} target life.`,
      );
    } else {
      info.push(`Projected ${PARAM_LABEL[t.parameter]} crossing (${lim}) at ${fmtH(core.pseudoFailureH)}, beyond the ${fmtH(plan.durationH)} target life.`);
    }
  } else if (core.trends.length) info.push('No parameter is projected to reach its limit.');
  for (const c of control) {
    if (!c.outOfControl || !c.chart) continue;
    drifting = true;
    const unit = c.parameter === 'hfe' ? ' %' : '×';
    const what = c.parameter === 'hfe' ? 'Mean hFE change' : 'Median ICBO ratio';
    reasons.push(
      `${what} at ${fmtH(c.readPointH)} (${round(c.value, 3)}${unit}) is out of control against ${c.reference.length} other ${core.lot.partNumber} lots ` +
        `(limits ${round(c.chart.lcl, 3)} to ${round(c.chart.ucl, 3)}${unit})${c.violations.length ? `: ${c.violations.map((v) => v.description).join('; ')}` : ''}.`,
    );
  }

  const planned = [...plan.readPointsH].sort((a, b) => a - b);
  const measured = new Set(core.readPoints.map((r) => r.hours));
  const missing = planned.filter((h) => !measured.has(h));
  const complete = run.state === 'finished' && missing.length === 0;
  if (failed) return { verdict: 'failed', reasons: [...reasons, ...info] };
  if (drifting) return { verdict: 'drifting', reasons: [...reasons, ...info] };
  reasons.push(...info);
  if (complete) {
    reasons.unshift(`All ${core.lotDevices.length} devices measured through ${fmtH(planned[planned.length - 1])}; ${failedDevices.length} failed (accept number ${plan.acceptNumber}).`);
    return { verdict: 'passed', reasons };
  }
  if (!core.readPoints.length) reasons.unshift(`Run ${run.code} is ${run.state}; no readings stored yet.`);
  else {
    reasons.unshift(
      `Run ${run.code} is ${run.state} at ${fmtH(run.stressHours)}; measured through ${fmtH(core.latestH ?? 0)}${missing.length ? `, read points ${missing.join(' / ')} h still to come` : ''}.`,
    );
  }
  return { verdict: 'in-progress', reasons };
}

/** FIT at 60 % and 90 % from this lot's devices × hours at the latest read point (chi-square, JESD85). */
export function lotFit(core: LotFigures): FitFigures | null {
  if (!core.plan || core.latestH === null || core.latestH <= 0) return null;
  const devices = core.lotDevices.filter((d) => d.status !== 'not-measured').length;
  if (!devices) return null;
  return fitFigures({
    failures: core.fails, devices, hoursEach: core.latestH, eaEv: core.plan.eaEv, useC: core.plan.useC, stressC: core.plan.stressC, stressBasis: core.plan.stressBasis,
  });
}

/**
 * The temperature that accelerates the devices: the chamber on unpowered stresses (reverse bias,
 * humidity), the steady junction temperature from the plan check on powered ones (operating life,
 * intermittent life), where self-heating puts the junction far above the chamber.
 */
export function stressTemperature(plan: { kind: string; chamberC: number; checkResult?: { derived?: { tjC?: unknown } } | null }): { stressC: number; stressBasis: string } {
  const tj = plan.checkResult?.derived?.tjC;
  if (isPoweredKindName(plan.kind) && typeof tj === 'number' && Number.isFinite(tj) && tj > plan.chamberC) {
    return { stressC: tj, stressBasis: 'junction temperature from the plan check (powered stress)' };
  }
  return { stressC: plan.chamberC, stressBasis: 'chamber temperature' };
}

export function fitFigures(p: { failures: number; devices: number; hoursEach: number; eaEv: number; useC: number; stressC: number; stressBasis?: string }): FitFigures {
  const af = arrheniusFactor({ eaEv: p.eaEv, useC: p.useC, stressC: p.stressC });
  const base = { failures: p.failures, devices: p.devices, hoursEach: p.hoursEach, accelerationFactor: af };
  const f60 = fitUpperBoundDetails({ ...base, confidence: 0.6 });
  const f90 = fitUpperBoundDetails({ ...base, confidence: 0.9 });
  const k = constantsUsed();
  return {
    ...base,
    deviceHours: p.devices * p.hoursEach,
    equivalentDeviceHours: f60.equivalentDeviceHours,
    fit60: f60.fit,
    fit90: f90.fit,
    chiSquare60: f60.chiSquare,
    chiSquare90: f90.chiSquare,
    constants: {
      boltzmannEvPerK: k.boltzmannEvPerK, kelvinOffset: k.kelvinOffset, eaEv: p.eaEv, useC: p.useC, stressC: p.stressC,
      stressBasis: p.stressBasis ?? 'chamber temperature', source: k.boltzmannSource,
    },
    method: `Arrhenius acceleration (JEDEC JEP122 / JESD85), stress at the ${p.stressBasis ?? 'chamber temperature'}; chi-square upper bound (JESD85)`,
  };
}
