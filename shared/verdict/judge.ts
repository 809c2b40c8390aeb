/**
 * The lot verdict: judges a lot's evidence (shared/verdict/evidence.ts) plan by plan — sample size
 * against the plan's, every read point complete for every sampled device, failures (delta limits,
 * data-sheet limits, catastrophic results, dispositions, trips) against the accept number, each
 * device's degradation path and a Weibull life fitted to the pseudo-failure times, and the lot
 * against its peers — then combines the plans' verdicts. Pure: no I/O.
 */
import type { LotVerdict } from '../schemas/analytics';
import { TERMINAL_STATES, type RunState } from '../domain/run-states';
import { demonstratedLtpd, weibullFit } from '../reliability';
import {
  deviceDrift,
  icboRatioLimit,
  individualsChart,
  pseudoFailureTime,
  predictionInterval,
  referredGain,
  runRuleViolations,
  type DriftParameter,
} from '../stats';
import { mean, median } from 'simple-statistics';
import {
  DISPOSITION_LABEL,
  MEASUREMENT_RESULT_LABEL,
  absoluteLimits,
  planConditionsKey,
  type AbsoluteLimit,
  type DeviceEvidence,
  type LotEvidence,
  type PeerLot,
  type PlanEvidence,
  type ReadingEvidence,
} from './evidence';

// The rules (LTPD_CONFIDENCE, PEER_CHART_MIN_LOTS, …) live in ./rules, which screens import
// without pulling the statistics libraries into the app.
export {
  EXTRAPOLATION_LIMIT,
  LTPD_CONFIDENCE,
  PEER_CHART_MIN_LOTS,
  PEER_INTERVAL_CONFIDENCE,
  PEER_INTERVAL_MIN_LOTS,
  VERDICT_RANK,
} from './rules';
import {
  EXTRAPOLATION_LIMIT,
  LTPD_CONFIDENCE,
  PEER_CHART_MIN_LOTS,
  PEER_INTERVAL_CONFIDENCE,
  PEER_INTERVAL_MIN_LOTS,
  VERDICT_RANK,
} from './rules';

export interface JudgeOptions {
  /** LTPD confidence (default LTPD_CONFIDENCE). */
  confidence?: number;
  /** Prediction-interval confidence (default PEER_INTERVAL_CONFIDENCE). */
  peerConfidence?: number;
}

// ---------------------------------------------------------------------------------------------
// Output
// ---------------------------------------------------------------------------------------------

export type JudgedParameter = DriftParameter | 'bvceo';

export interface DeviceJudgement {
  deviceId: string;
  serial: string;
  runId: string;
  socketIndex: number;
  creditedHours: number;
  /** pass: judged and within limits so far; fail: counted failure; removed: left the sample; pending: something unjudged. */
  status: 'pass' | 'fail' | 'removed' | 'pending';
  failedAtH: number | null;
  /** Why it failed, in words ("hFE 61 outside ±15 % of 80 at 500 h"). */
  failedBecause: string[];
  removedAtH: number | null;
  removedBecause: string | null;
  /** Read points where this device has nothing that counts yet, with why. */
  missing: Array<{ hours: number; why: string }>;
}

export interface ReadPointStatus {
  hours: number;
  /** The sample's runs have reached this read point (or all ended). */
  due: boolean;
  /** Devices that must be accounted for at this read point. */
  expected: number;
  /** Devices with a judged reading (measured, or measured with confirmed conditions). */
  measured: number;
  catastrophic: number;
  /** Devices taken out of the sample at or before this read point (lost, damaged, excluded). */
  removed: number;
  /** Readings whose measuring conditions differ from time zero, not yet confirmed. */
  awaitingConfirmation: number;
  /** Devices still to account for: serial and why. */
  missing: Array<{ serial: string; why: string }>;
  complete: boolean;
}

export interface ParameterPath {
  parameter: 'hfe' | 'icbo' | 'vcesat';
  model: 'linear-origin' | 'log-ratio-origin';
  /** (hours, change): % for hFE, ratio for ICBO, mV for VCE(sat). */
  points: Array<{ hours: number; value: number }>;
  slopePerHour: number;
  /** The limit in the path's unit, signed in the drift's direction. */
  limit: number | null;
  /** Hours at which the fitted path reaches the limit; null when it never does. */
  crossingH: number | null;
}

export interface DeviceDegradation {
  deviceId: string;
  serial: string;
  paths: ParameterPath[];
  /** Earliest crossing over the parameters within the extrapolation horizon. */
  pseudoFailureH: number | null;
  parameter: 'hfe' | 'icbo' | 'vcesat' | null;
  /** What enters the life fit: a (pseudo-)failure time or a suspension (right-censored). */
  life: { kind: 'failure' | 'suspension'; hours: number; why: string } | null;
}

export interface Degradation {
  method: string;
  horizonH: number | null;
  devices: DeviceDegradation[];
  weibull: { beta: number; eta: number; method: string; failures: number; suspensions: number; fractionByTargetLife: number } | null;
  /**
   * Fraction of the devices projected to reach a limit by the plan's target life: from the Weibull
   * fit, or — when none can be fitted (fewer than two crossings, or all at one time) — the share of
   * devices whose pseudo-failure time falls within it. null without paths.
   */
  projectedFraction: number | null;
  projectedBy: 'weibull' | 'share of devices' | null;
  note: string;
}

export interface PeerCheck {
  parameter: 'hfe' | 'icbo';
  readPointH: number;
  value: number;
  method: 'prediction-interval' | 'individuals-chart' | null;
  /** Peer lots, production order. */
  peers: Array<{ lotId: string; lotCode: string; productionDate: string | null; value: number }>;
  lower: number | null;
  upper: number | null;
  centre: number | null;
  confidence: number | null;
  violations: string[];
  outOfLimits: boolean;
  note: string | null;
}

export interface SampleJudgement {
  planned: number;
  booked: number;
  /** Devices still in the sample (booked less those lost, damaged or excluded). */
  judged: number;
  removed: number;
  acceptNumber: number;
  failures: number;
  confidence: number;
  /** The LTPD the plan's own sample and accept number demonstrate. */
  planLtpd: number;
  /** The LTPD the judged devices with the failures seen demonstrate; null when failures exceed the accept number. */
  demonstratedLtpd: number | null;
  deviation: { sampleSize: number; reason: string; by: string; at: string } | null;
}

export interface PlanJudgement {
  planId: string;
  planName: string;
  kind: string;
  conditionsKey: string;
  runs: Array<{ runId: string; runCode: string; rigCode: string | null; state: string; stressHours: number }>;
  verdict: LotVerdict;
  reasons: string[];
  sample: SampleJudgement;
  readPoints: ReadPointStatus[];
  devices: DeviceJudgement[];
  degradation: Degradation;
  peers: PeerCheck[];
  /** For FIT: counted failures and the sum of the devices' credited hours. */
  exposure: { devices: number; deviceHours: number; failures: number };
  /** Latest read point with judged readings after time zero. */
  latestH: number | null;
}

export interface LotJudgement {
  verdict: LotVerdict;
  reasons: string[];
  plans: PlanJudgement[];
}

// ---------------------------------------------------------------------------------------------
// Helpers
// ---------------------------------------------------------------------------------------------

const fmtH = (h: number) => `${Math.round(h).toLocaleString('en-GB')} h`;
const pct = (f: number) => (f > 0 && f < 1e-4 ? 'below 0.01 %' : `${+(f * 100).toPrecision(3)} %`);
const r4 = (x: number) => +x.toPrecision(4);
const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
const PARAM_LABEL: Record<JudgedParameter, string> = { hfe: 'hFE', icbo: 'ICBO', vcesat: 'VCE(sat)', bvceo: 'BVCEO' };
const isTerminal = (state: string) => (TERMINAL_STATES as readonly string[]).includes(state as RunState);

/** A reading the verdict may judge: measured or catastrophic, with its conditions agreeing with time zero or confirmed. */
const judgeable = (r: ReadingEvidence) => r.conditionDifferences.length === 0 || r.confirmed !== null;

function fmtValue(parameter: JudgedParameter, v: number): string {
  if (parameter === 'icbo') {
    const a = Math.abs(v);
    if (a >= 1e-3) return `${r4(v * 1e3)} mA`;
    if (a >= 1e-6) return `${r4(v * 1e6)} µA`;
    return `${r4(v * 1e9)} nA`;
  }
  if (parameter === 'hfe') return `${r4(v)}`;
  return `${r4(v)} V`;
}

/** A reading against the data sheet's limits; the words of each breach. */
export function absoluteBreaches(values: Record<JudgedParameter, number | null>, limits: AbsoluteLimit[]): string[] {
  const out: string[] = [];
  for (const l of limits) {
    const v = values[l.parameter];
    if (v === null || v === undefined) continue;
    const at = l.conditions ? ` (${l.conditions})` : '';
    if (l.min !== null && v < l.min)
      out.push(`${PARAM_LABEL[l.parameter]} ${fmtValue(l.parameter, v)} below the data sheet's ${fmtValue(l.parameter, l.min)}${at}`);
    if (l.max !== null && v > l.max)
      out.push(`${PARAM_LABEL[l.parameter]} ${fmtValue(l.parameter, v)} above the data sheet's ${fmtValue(l.parameter, l.max)}${at}`);
  }
  return out;
}

interface DeviceWork {
  ev: DeviceEvidence;
  /** hFE referred to the reference temperature, per read point. */
  byHours: Map<number, ReadingEvidence>;
  t0: ReadingEvidence | null;
  t0Hfe: number | null;
  failedAtH: number | null;
  failedBecause: string[];
  removedAtH: number | null;
  removedBecause: string | null;
  /** Per read point: 'ok' (judged), 'catastrophic', 'removed', 'failed-earlier', or a reason it is missing. */
  at: Map<
    number,
    { counts: boolean; kind: 'measured' | 'catastrophic' | 'removed' | 'after-failure' | 'missing' | 'flagged'; why: string }
  >;
  /** Judged changes for paths: per read point > 0. */
  changes: Array<{ hours: number; hfePct: number | null; icboRatio: number | null; vcesatMv: number | null }>;
}

// ---------------------------------------------------------------------------------------------
// One device
// ---------------------------------------------------------------------------------------------

function judgeDevice(ev: DeviceEvidence, plan: PlanEvidence['plan'], hoursList: number[], gain: LotEvidence['gainReference']): DeviceWork {
  const byHours = new Map(ev.readings.map((r) => [r.readPointH, r]));
  const t0 = byHours.get(0) ?? null;
  const refer = (r: ReadingEvidence) =>
    r.hfe === null ? null : gain ? referredGain(r.hfe, r.measuredC ?? gain.referenceC, gain).hfe : r.hfe;
  const t0Hfe = t0 && t0.result === 'measured' ? refer(t0) : null;
  const w: DeviceWork = {
    ev,
    byHours,
    t0,
    t0Hfe,
    failedAtH: null,
    failedBecause: [],
    removedAtH: null,
    removedBecause: null,
    at: new Map(),
    changes: [],
  };
  const fail = (h: number, why: string) => {
    if (w.failedAtH === null) w.failedAtH = h;
    if (w.failedAtH === h) w.failedBecause.push(why);
  };
  const REMOVING = ['lost', 'damaged', 'excluded'];
  const removal = [...ev.dispositions].filter((d) => REMOVING.includes(d.kind)).sort((a, b) => a.readPointH - b.readPointH)[0] ?? null;
  const failureDisposition =
    [...ev.dispositions].filter((d) => d.kind === 'trip-failure').sort((a, b) => a.readPointH - b.readPointH)[0] ?? null;
  const reseated = ev.dispositions.some((d) => d.kind === 'reseated');
  const trip = ev.trip;
  /** First read point after the trip: the device's stress ended before it. */
  const tripReadPoint = trip ? (hoursList.find((h) => h > trip.atH) ?? null) : null;
  const limits = absoluteLimits(plan.criteria.limits);

  for (const h of hoursList) {
    if (w.failedAtH !== null && h > w.failedAtH) {
      w.at.set(h, { counts: true, kind: 'after-failure', why: `failed at ${fmtH(w.failedAtH)}` });
      continue;
    }
    if (w.removedAtH !== null) {
      w.at.set(h, { counts: true, kind: 'removed', why: w.removedBecause! });
      continue;
    }
    if (removal && removal.readPointH <= h) {
      w.removedAtH = h;
      w.removedBecause = `${DISPOSITION_LABEL[removal.kind].toLowerCase()} at ${fmtH(removal.readPointH)}: ${removal.reason} (${removal.by}, ${removal.at.slice(0, 10)})`;
      w.at.set(h, { counts: true, kind: 'removed', why: w.removedBecause });
      continue;
    }
    if (failureDisposition && failureDisposition.readPointH <= h) {
      const tripped = trip ? `socket tripped at ${fmtH(trip.atH)}${trip.reason ? ` (${trip.reason})` : ''}, ` : '';
      fail(
        h,
        `${tripped}counted as a failure at ${fmtH(failureDisposition.readPointH)}: ${failureDisposition.reason} (${failureDisposition.by})`,
      );
      w.at.set(h, { counts: true, kind: 'catastrophic', why: 'counted as a failure' });
      continue;
    }
    if (trip && tripReadPoint !== null && h >= tripReadPoint && !reseated) {
      w.at.set(h, {
        counts: false,
        kind: 'missing',
        why: `socket tripped at ${fmtH(trip.atH)}; failure, re-seat or exclusion not yet recorded`,
      });
      continue;
    }
    const r = byHours.get(h);
    if (!r) {
      w.at.set(h, { counts: false, kind: 'missing', why: 'no reading or disposition' });
      continue;
    }
    if (!judgeable(r)) {
      w.at.set(h, {
        counts: false,
        kind: 'flagged',
        why: `measuring conditions differ from time zero (${r.conditionDifferences.join('; ')}), not yet confirmed`,
      });
      continue;
    }
    if (r.result !== 'measured') {
      fail(h, `${MEASUREMENT_RESULT_LABEL[r.result].toLowerCase()} at ${fmtH(h)}`);
      w.at.set(h, { counts: true, kind: 'catastrophic', why: MEASUREMENT_RESULT_LABEL[r.result].toLowerCase() });
      continue;
    }
    w.at.set(h, { counts: true, kind: 'measured', why: '' });
    if (h === 0) continue;
    const hfe = refer(r);
    for (const b of absoluteBreaches({ hfe, icbo: r.icboA, vcesat: r.vcesatV, bvceo: r.bvceoV }, limits)) fail(h, `${b} at ${fmtH(h)}`);
    if (t0 && t0.result === 'measured' && judgeable(t0)) {
      const d = deviceDrift({
        timeZero: { hfe: t0Hfe, icboA: t0.icboA, vcesatV: t0.vcesatV },
        reading: { hfe, icboA: r.icboA, vcesatV: r.vcesatV },
        criteria: plan.criteria,
      });
      for (const p of d.parameters) if (p.pass === false) fail(h, `${p.reason} at ${fmtH(h)}`);
      const get = (name: DriftParameter) => d.parameters.find((p) => p.parameter === name && p.pass !== null) ?? null;
      w.changes.push({
        hours: h,
        hfePct: get('hfe')?.changePct ?? null,
        icboRatio: get('icbo')?.ratio ?? null,
        vcesatMv: get('vcesat')?.delta != null ? get('vcesat')!.delta! * 1000 : null,
      });
    }
  }
  return w;
}

// ---------------------------------------------------------------------------------------------
// Degradation per device → life (NIST e-Handbook §8.4.2.3)
// ---------------------------------------------------------------------------------------------

/**
 * Each device's path per parameter through the origin (% change of hFE, ln ratio of ICBO, mV shift
 * of VCE(sat)), its crossing of the plan's delta limit, and the device's pseudo-failure time: the
 * earliest crossing within EXTRAPOLATION_LIMIT × its last read point. A device that failed without
 * a crossing fails at the read point it failed; one that does not reach a limit, or left the test,
 * is a suspension. A Weibull life is fitted to these by maximum likelihood.
 */
function degradation(works: DeviceWork[], plan: PlanEvidence['plan']): Degradation {
  const c = plan.criteria;
  const devices: DeviceDegradation[] = works.map((w) => {
    const paths: ParameterPath[] = [];
    const fit = (
      parameter: ParameterPath['parameter'],
      model: ParameterPath['model'],
      pts: Array<{ hours: number; value: number }>,
      limitFor: (sign: number) => number | null,
    ) => {
      if (!pts.length) return;
      if (model === 'log-ratio-origin' && pts.some((p) => !(p.value > 0))) return;
      const probe = pseudoFailureTime({
        hours: pts.map((p) => p.hours),
        changes: pts.map((p) => p.value),
        limit: model === 'log-ratio-origin' ? 2 : 1,
        model,
      });
      const limit = limitFor(Math.sign(probe.slope));
      const crossing =
        limit === null ? null : pseudoFailureTime({ hours: pts.map((p) => p.hours), changes: pts.map((p) => p.value), limit, model }).hours;
      paths.push({ parameter, model, points: pts, slopePerHour: probe.slope, limit, crossingH: crossing });
    };
    fit(
      'hfe',
      'linear-origin',
      w.changes.filter((x) => x.hfePct !== null).map((x) => ({ hours: x.hours, value: x.hfePct! })),
      (s) => (s === 0 ? null : s * c.hfeChangePct),
    );
    const ratioLimit = icboRatioLimit(w.t0?.icboA ?? null, c);
    if (ratioLimit !== null) {
      fit(
        'icbo',
        'log-ratio-origin',
        w.changes.filter((x) => x.icboRatio !== null).map((x) => ({ hours: x.hours, value: x.icboRatio! })),
        (s) => (s > 0 ? ratioLimit : null),
      );
    }
    fit(
      'vcesat',
      'linear-origin',
      w.changes.filter((x) => x.vcesatMv !== null).map((x) => ({ hours: x.hours, value: x.vcesatMv! })),
      (s) => (s === 0 ? null : s * c.vcesatShiftV * 1000),
    );
    const lastH = w.changes.length ? Math.max(...w.changes.map((x) => x.hours)) : null;
    const horizon = lastH !== null ? lastH * EXTRAPOLATION_LIMIT : null;
    const crossings = paths
      .filter((p) => p.crossingH !== null && horizon !== null && p.crossingH <= horizon)
      .sort((a, b) => a.crossingH! - b.crossingH!);
    const first = crossings[0] ?? null;
    let life: DeviceDegradation['life'] = null;
    if (first) life = { kind: 'failure', hours: first.crossingH!, why: `${PARAM_LABEL[first.parameter]} path reaches its limit` };
    else if (w.failedAtH !== null && w.failedAtH > 0) life = { kind: 'failure', hours: w.failedAtH, why: 'failed at this read point' };
    else if (w.removedAtH !== null && lastH !== null) life = { kind: 'suspension', hours: lastH, why: 'left the test' };
    else if (horizon !== null)
      life = { kind: 'suspension', hours: horizon, why: `no limit reached within ${EXTRAPOLATION_LIMIT}× its last read point` };
    return {
      deviceId: w.ev.deviceId,
      serial: w.ev.serial,
      paths,
      pseudoFailureH: first?.crossingH ?? null,
      parameter: first?.parameter ?? null,
      life,
    };
  });
  const lives = devices.map((d) => d.life).filter((l): l is NonNullable<typeof l> => l !== null && l.hours > 0);
  const failures = lives.filter((l) => l.kind === 'failure').map((l) => l.hours);
  const suspensions = lives.filter((l) => l.kind === 'suspension').map((l) => l.hours);
  const horizons = works.map((w) => (w.changes.length ? Math.max(...w.changes.map((x) => x.hours)) : 0));
  const horizonH = horizons.some((h) => h > 0) ? Math.max(...horizons) * EXTRAPOLATION_LIMIT : null;
  const method = 'per-device paths through the origin (NIST/SEMATECH e-Handbook §8.4.2.3), Weibull by maximum likelihood with suspensions';
  const byTarget = lives.filter((l) => l.kind === 'failure' && l.hours <= plan.durationH).length;
  const share = lives.length ? byTarget / lives.length : null;
  const shareWords = lives.length
    ? `${byTarget} of ${lives.length} devices projected to reach a limit by the plan's ${fmtH(plan.durationH)}`
    : '';
  const noFit = (why: string): Degradation => ({
    method,
    horizonH,
    devices,
    weibull: null,
    projectedFraction: share,
    projectedBy: share === null ? null : 'share of devices',
    note: lives.length ? `${why}; ${shareWords} (${pct(share!)}).` : 'No device has readings after time zero yet.',
  });
  if (failures.length < 2) {
    return noFit(
      `${plural(failures.length, 'device')} of ${lives.length} reach a limit within ${EXTRAPOLATION_LIMIT}× the last read point; a Weibull fit needs at least two`,
    );
  }
  try {
    const wf = weibullFit(failures, suspensions, { method: 'mle' });
    const fractionByTargetLife = 1 - Math.exp(-Math.pow(plan.durationH / wf.eta, wf.beta));
    return {
      method,
      horizonH,
      devices,
      weibull: { beta: wf.beta, eta: wf.eta, method: wf.method, failures: wf.failures, suspensions: wf.suspensions, fractionByTargetLife },
      projectedFraction: fractionByTargetLife,
      projectedBy: 'weibull',
      note: `Weibull β ${r4(wf.beta)}, η ${fmtH(wf.eta)} from ${plural(wf.failures, 'pseudo-failure time')} and ${plural(wf.suspensions, 'suspension')}; ${pct(fractionByTargetLife)} projected to fail by the plan's ${fmtH(plan.durationH)}.`,
    };
  } catch (e) {
    return noFit(`No Weibull fit (${(e as Error).message})`);
  }
}

// ---------------------------------------------------------------------------------------------
// Control values and peers
// ---------------------------------------------------------------------------------------------

/** A plan's control values per read point from its judged devices: mean hFE change (%), median ICBO ratio. */
export function controlValues(pe: PlanEvidence, gain: LotEvidence['gainReference']): PeerLot['values'] {
  const hoursList = planHours(pe);
  const works = pe.devices.map((d) => judgeDevice(d, pe.plan, hoursList, gain));
  return valuesOf(works);
}

function valuesOf(works: DeviceWork[]): PeerLot['values'] {
  const out: PeerLot['values'] = [];
  const hours = [...new Set(works.flatMap((w) => w.changes.map((c) => c.hours)))].sort((a, b) => a - b);
  for (const h of hours) {
    const at = works.map((w) => w.changes.find((c) => c.hours === h)).filter((c): c is DeviceWork['changes'][number] => !!c);
    const hfe = at.map((c) => c.hfePct).filter((v): v is number => v !== null && Number.isFinite(v));
    const icbo = at.map((c) => c.icboRatio).filter((v): v is number => v !== null && Number.isFinite(v));
    if (hfe.length) out.push({ parameter: 'hfe', readPointH: h, value: mean(hfe) });
    if (icbo.length) out.push({ parameter: 'icbo', readPointH: h, value: median(icbo) });
  }
  return out;
}

const byProduction = (a: { productionDate: string | null; lotCode: string }, b: { productionDate: string | null; lotCode: string }) =>
  (a.productionDate ?? '9999').localeCompare(b.productionDate ?? '9999') || a.lotCode.localeCompare(b.lotCode);

function peerChecks(
  lot: LotEvidence['lot'],
  key: string,
  values: PeerLot['values'],
  latestH: number | null,
  peers: PeerLot[],
  confidence: number,
): PeerCheck[] {
  if (latestH === null) return [];
  const out: PeerCheck[] = [];
  for (const parameter of ['hfe', 'icbo'] as const) {
    const own = values.find((v) => v.parameter === parameter && v.readPointH === latestH);
    if (!own) continue;
    const list = peers
      .filter((p) => p.lotId !== lot.id && p.conditionsKey === key)
      .map((p) => ({
        lotId: p.lotId,
        lotCode: p.lotCode,
        productionDate: p.productionDate,
        value: p.values.find((v) => v.parameter === parameter && v.readPointH === latestH)?.value,
      }))
      .filter(
        (p): p is { lotId: string; lotCode: string; productionDate: string | null; value: number } =>
          typeof p.value === 'number' && Number.isFinite(p.value),
      )
      .sort(byProduction);
    const base = { parameter, readPointH: latestH, value: own.value, peers: list };
    const none = { method: null, lower: null, upper: null, centre: null, confidence: null, violations: [], outOfLimits: false };
    if (list.length < PEER_INTERVAL_MIN_LOTS) {
      out.push({
        ...base,
        ...none,
        note: `Needs at least ${PEER_INTERVAL_MIN_LOTS} peer lots stressed under the same conditions and measured at ${fmtH(latestH)}; ${list.length} found.`,
      });
      continue;
    }
    const peerValues = list.map((p) => p.value);
    if (list.length < PEER_CHART_MIN_LOTS) {
      const pi = predictionInterval({ values: peerValues, confidence });
      if (!(pi.sd > 0)) {
        out.push({ ...base, ...none, note: 'The peer lots agree exactly, so there is no spread to judge against.' });
        continue;
      }
      const outside = own.value < pi.lower || own.value > pi.upper;
      out.push({
        ...base,
        method: 'prediction-interval',
        lower: pi.lower,
        upper: pi.upper,
        centre: pi.mean,
        confidence,
        violations: [],
        outOfLimits: outside,
        note: null,
      });
      continue;
    }
    // Individuals chart: limits and moving ranges from the peers in production order; run rules on
    // the whole sequence with this lot in its production place; only patterns that include it count.
    const chart = individualsChart(peerValues);
    if (!(chart.sigma > 0)) {
      out.push({ ...base, ...none, note: 'The peer lots agree exactly, so there is no spread to judge against.' });
      continue;
    }
    const seq = [
      ...list.map((p) => ({ ...p, self: false })),
      { lotId: lot.id, lotCode: lot.code, productionDate: lot.productionDate, value: own.value, self: true },
    ].sort(byProduction);
    const selfIndex = seq.findIndex((s) => s.self);
    const violations = runRuleViolations(
      seq.map((s) => s.value),
      { mean: chart.mean, sigma: chart.sigma },
    )
      .filter((v) => v.indices.includes(selfIndex))
      .map((v) => `Western Electric rule ${v.rule}: ${v.description.replace(`point ${selfIndex + 1}`, 'this lot')}`);
    const outside = own.value > chart.ucl || own.value < chart.lcl;
    out.push({
      ...base,
      method: 'individuals-chart',
      lower: chart.lcl,
      upper: chart.ucl,
      centre: chart.mean,
      confidence: null,
      violations,
      outOfLimits: outside || violations.length > 0,
      note: null,
    });
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// One plan
// ---------------------------------------------------------------------------------------------

/** The plan's read points, time zero always included, ascending. */
function planHours(pe: PlanEvidence): number[] {
  return [...new Set([0, ...pe.plan.readPointsH])].sort((a, b) => a - b);
}

export function judgePlan(ev: LotEvidence, pe: PlanEvidence, peers: PeerLot[], options: JudgeOptions = {}): PlanJudgement {
  const confidence = options.confidence ?? LTPD_CONFIDENCE;
  const plan = pe.plan;
  const hoursList = planHours(pe);
  const works = pe.devices.map((d) => judgeDevice(d, plan, hoursList, ev.gainReference));
  const runsEnded = pe.runs.length > 0 && pe.runs.every((r) => isTerminal(r.state));
  const reached = Math.max(0, ...pe.runs.map((r) => r.stressHours));

  // Read points: due when every run of the sample reached them or ended; complete when every device counts.
  const readPoints: ReadPointStatus[] = hoursList.map((h) => {
    const due = pe.runs.length > 0 && pe.runs.every((r) => isTerminal(r.state) || r.stressHours >= h);
    const at = works.map((w) => ({ w, s: w.at.get(h)! }));
    const missing = at.filter((x) => !x.s.counts).map((x) => ({ serial: x.w.ev.serial, why: x.s.why }));
    const removedHere = at.filter((x) => x.s.kind === 'removed').length;
    return {
      hours: h,
      due,
      expected: works.length - removedHere,
      measured: at.filter((x) => x.s.kind === 'measured').length,
      catastrophic: at.filter((x) => x.s.kind === 'catastrophic').length,
      removed: removedHere,
      awaitingConfirmation: at.filter((x) => x.s.kind === 'flagged').length,
      missing,
      complete: works.length > 0 && missing.length === 0,
    };
  });

  const failedWorks = works.filter((w) => w.failedAtH !== null);
  const failures = failedWorks.length;
  const removed = works.filter((w) => w.removedAtH !== null && w.failedAtH === null).length;
  const judgedN = works.length - removed;
  const planLtpd = demonstratedLtpd({
    sampleSize: plan.sampleSize,
    acceptNumber: Math.min(plan.acceptNumber, plan.sampleSize - 1),
    confidence,
  });
  const demonstrated =
    judgedN > 0 && failures < judgedN && failures <= plan.acceptNumber
      ? demonstratedLtpd({ sampleSize: judgedN, acceptNumber: failures, confidence })
      : null;
  const sample: SampleJudgement = {
    planned: plan.sampleSize,
    booked: works.length,
    judged: judgedN,
    removed,
    acceptNumber: plan.acceptNumber,
    failures,
    confidence,
    planLtpd,
    demonstratedLtpd: demonstrated,
    deviation: pe.deviation,
  };

  const devices: DeviceJudgement[] = works.map((w) => ({
    deviceId: w.ev.deviceId,
    serial: w.ev.serial,
    runId: w.ev.runId,
    socketIndex: w.ev.socketIndex,
    creditedHours: w.ev.creditedHours,
    status:
      w.failedAtH !== null ? 'fail' : w.removedAtH !== null ? 'removed' : [...w.at.values()].some((s) => !s.counts) ? 'pending' : 'pass',
    failedAtH: w.failedAtH,
    failedBecause: w.failedBecause,
    removedAtH: w.removedAtH,
    removedBecause: w.removedBecause,
    missing: hoursList.filter((h) => !w.at.get(h)!.counts).map((h) => ({ hours: h, why: w.at.get(h)!.why })),
  }));

  const deg = degradation(works, plan);
  const values = valuesOf(works);
  const judgedHours = [...new Set(values.map((v) => v.readPointH))].sort((a, b) => a - b);
  const latestH = judgedHours.length ? judgedHours[judgedHours.length - 1] : null;
  const key = planConditionsKey(plan);
  const peerList = peerChecks(ev.lot, key, values, latestH, peers, options.peerConfidence ?? PEER_INTERVAL_CONFIDENCE);
  const exposure = { devices: works.length, deviceHours: works.reduce((s, w) => s + Math.max(0, w.ev.creditedHours), 0), failures };

  const { verdict, reasons } = planVerdict({
    plan,
    pe,
    sample,
    readPoints,
    failedWorks,
    deg,
    peers: peerList,
    runsEnded,
    reached,
    latestH,
  });
  return {
    planId: plan.planId,
    planName: plan.name,
    kind: plan.kind,
    conditionsKey: key,
    runs: pe.runs.map((r) => ({ runId: r.runId, runCode: r.runCode, rigCode: r.rigCode, state: r.state, stressHours: r.stressHours })),
    verdict,
    reasons,
    sample,
    readPoints,
    devices,
    degradation: deg,
    peers: peerList,
    exposure,
    latestH,
  };
}

function planVerdict(p: {
  plan: PlanEvidence['plan'];
  pe: PlanEvidence;
  sample: SampleJudgement;
  readPoints: ReadPointStatus[];
  failedWorks: DeviceWork[];
  deg: Degradation;
  peers: PeerCheck[];
  runsEnded: boolean;
  reached: number;
  latestH: number | null;
}): { verdict: LotVerdict; reasons: string[] } {
  const { plan, pe, sample, readPoints, failedWorks, deg, runsEnded } = p;
  const conf = `${+(sample.confidence * 100).toFixed(2)} %`;
  if (!pe.runs.length || !pe.devices.length)
    return { verdict: 'untested', reasons: [`No devices of this lot are booked under ${plan.name}.`] };

  // Failures.
  const failReasons: string[] = [];
  if (failedWorks.length) {
    const list = failedWorks
      .slice(0, 5)
      .map((w) => `${w.ev.serial} at ${fmtH(w.failedAtH!)} (${w.failedBecause[0]})`)
      .join('; ');
    failReasons.push(
      `${plural(failedWorks.length, 'device')} failed, accept number ${plan.acceptNumber}: ${list}${failedWorks.length > 5 ? '; …' : ''}.`,
    );
  }
  // Sample.
  const sampleWords =
    sample.demonstratedLtpd !== null
      ? `at ${conf} confidence, ${plural(sample.failures, 'failure')} in ${sample.judged} demonstrate an LTPD of ${pct(sample.demonstratedLtpd)}`
      : `${plural(sample.failures, 'failure')} in ${sample.judged}`;
  const short = sample.judged < sample.planned;
  const sampleReason = short
    ? `${sample.judged} of ${sample.planned} devices${sample.removed ? ` (${sample.booked} booked, ${sample.removed} left the sample)` : ''}: ${sampleWords}, not the plan's ${pct(sample.planLtpd)}.`
    : `${sample.judged} devices (plan ${sample.planned}, accept number ${plan.acceptNumber}): ${sampleWords}; the plan asks ${pct(sample.planLtpd)}.`;
  const deviationReason = pe.deviation
    ? `Recorded sample deviation: ${pe.deviation.sampleSize} devices — ${pe.deviation.reason} (${pe.deviation.by}, ${pe.deviation.at.slice(0, 10)}).`
    : null;

  // Drift: the life fitted to the devices' pseudo-failure times, and the peers.
  const driftReasons: string[] = [];
  const info: string[] = [];
  if (deg.projectedFraction !== null && deg.projectedFraction >= sample.planLtpd) {
    driftReasons.push(`Degradation: ${deg.note.replace(/\.$/, '')}, at or above the plan's LTPD of ${pct(sample.planLtpd)}.`);
  } else info.push(`Degradation: ${deg.note}`);
  for (const c of p.peers) {
    const what = c.parameter === 'hfe' ? 'Mean hFE change' : 'Median ICBO ratio';
    const unit = c.parameter === 'hfe' ? ' %' : '×';
    if (c.method === null) {
      info.push(`${what}: ${c.note}`);
      continue;
    }
    const how =
      c.method === 'prediction-interval'
        ? `the ${+(c.confidence! * 100).toFixed(2)} % prediction interval from ${plural(c.peers.length, 'peer lot')}`
        : `individuals-chart limits from ${c.peers.length} peer lots in production order`;
    const words = `${what} at ${fmtH(c.readPointH)} (${r4(c.value)}${unit}) ${c.outOfLimits ? 'is outside' : 'is within'} ${how} (${r4(c.lower!)} to ${r4(c.upper!)}${unit})${c.violations.length ? `: ${c.violations.join('; ')}` : ''}.`;
    if (c.outOfLimits) driftReasons.push(words);
    else info.push(words);
  }

  // Completeness.
  const dueIncomplete = readPoints.filter((r) => r.due && !r.complete);
  const incompleteReasons = dueIncomplete.map((r) => {
    const kinds = new Map<string, number>();
    for (const m of r.missing) kinds.set(m.why, (kinds.get(m.why) ?? 0) + 1);
    const detail = [...kinds.entries()].map(([why, n]) => `${n} ${why}`).join('; ');
    return `Read point ${fmtH(r.hours)}: ${r.missing.length} of ${r.expected} devices not accounted for (${detail}).`;
  });
  const notDue = readPoints.filter((r) => !r.due).map((r) => r.hours);

  const failed = failedWorks.length > plan.acceptNumber;
  if (failed) return { verdict: 'failed', reasons: [...failReasons, sampleReason, ...driftReasons, ...info] };
  if (driftReasons.length)
    return { verdict: 'drifting', reasons: [...driftReasons, ...failReasons, sampleReason, ...incompleteReasons, ...info] };
  const deviationMeets =
    pe.deviation !== null && sample.demonstratedLtpd !== null && sample.demonstratedLtpd <= sample.planLtpd * (1 + 1e-9);
  if (short && !deviationMeets) {
    const why = pe.deviation ? sampleReason : `${sampleReason} No sample deviation is recorded.`;
    return {
      verdict: 'insufficient-sample',
      reasons: [why, ...(deviationReason ? [deviationReason] : []), ...failReasons, ...incompleteReasons, ...info],
    };
  }
  if (!runsEnded) {
    const at = pe.runs.map((r) => `${r.runCode} at ${fmtH(r.stressHours)}`).join(' + ');
    const head = `Run${pe.runs.length > 1 ? 's' : ''} ${at}${notDue.length ? `; read points ${notDue.join(' / ')} h still to come` : ''}.`;
    return { verdict: 'in-progress', reasons: [head, ...failReasons, ...incompleteReasons, sampleReason, ...info] };
  }
  if (dueIncomplete.length) return { verdict: 'incomplete', reasons: [...incompleteReasons, ...failReasons, sampleReason, ...info] };
  const last = readPoints[readPoints.length - 1];
  const head = `All ${sample.judged} devices accounted for at every read point through ${fmtH(last.hours)}; ${plural(failedWorks.length, 'failure')} (accept number ${plan.acceptNumber}).`;
  return { verdict: 'passed', reasons: [head, sampleReason, ...(deviationReason ? [deviationReason] : []), ...failReasons, ...info] };
}

// ---------------------------------------------------------------------------------------------
// The lot
// ---------------------------------------------------------------------------------------------

/**
 * Judges every plan the lot was stressed under, then combines: the worst plan's verdict
 * (VERDICT_RANK), with each plan's verdict named when there are several.
 */
export function judgeLot(evidence: LotEvidence, peers: PeerLot[], options: JudgeOptions = {}): LotJudgement {
  const plans = evidence.plans.map((pe) => judgePlan(evidence, pe, peers, options));
  if (!plans.length) return { verdict: 'untested', reasons: ['This lot has not been on a stress run yet.'], plans };
  if (plans.length === 1) return { verdict: plans[0].verdict, reasons: plans[0].reasons, plans };
  const worst = [...plans].sort((a, b) => VERDICT_RANK[a.verdict] - VERDICT_RANK[b.verdict])[0];
  const summary = `Stressed under ${plans.length} plans: ${plans.map((p) => `${p.planName} ${p.verdict}`).join('; ')}.`;
  return { verdict: worst.verdict, reasons: [summary, ...worst.reasons.map((r) => `${worst.planName}: ${r}`)], plans };
}
