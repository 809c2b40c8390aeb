import type { DataSource } from 'typeorm';
import type {
  DeviceTypeSummary,
  LotDetail,
  LotPlanView,
  LotSummary,
  LotVerdict,
  MechanismFitSummary,
  PlanAcceleration,
} from '../../../shared/schemas/analytics';
import { chiSquareQuantile, constantsUsed, sampleSizeForLtpd } from '../../../shared/reliability';
import {
  MECHANISM_OF_KIND,
  STRESS_MECHANISMS,
  mechanismExposure,
  type DeviceExposure,
  type MechanismPlan,
} from '../../../shared/reliability/mechanisms';
import type { LotEvidence, PlanEvidence } from '../../../shared/verdict/evidence';
import type { LotJudgement, PlanJudgement } from '../../../shared/verdict/judge';
import { DeviceTypeEntity } from '../../db/entities';
import { notFound } from '../../http/errors';
import { lotCorrectedVersions, recordDeviationVersions } from '../measurements/measurements.data';
import { lotVersionView } from '../measurements/record-gate';
import { LOT_CAUTION, junctionBasis, planFit } from './lot-analysis';
import { PartCache, type Analysed } from './part-analysis';

export class AnalyticsService {
  /**
   * Lots of the same part are analysed together (each is judged against the others), which at lab
   * scale is a few hundred milliseconds of work; the cache keeps it per part until any row it read
   * changes (see PartCache).
   */
  private readonly parts: PartCache;

  constructor(private readonly ds: DataSource) {
    this.parts = new PartCache(ds);
  }

  private toSummary(a: Analysed): LotSummary {
    const c = a.core;
    const latest = c.readPoints.find((r) => r.hours === c.latestH);
    return {
      lotId: c.lot.id,
      lotCode: c.lot.code,
      deviceTypeId: c.lot.deviceTypeId,
      partNumber: c.lot.partNumber,
      dateCode: c.lot.dateCode,
      productionDate: a.evidence.lot.productionDate,
      productionDateSource: a.evidence.lot.productionDateSource,
      verdict: a.verdict,
      reasons: a.reasons,
      planVerdicts: a.judgement.plans.map((p) => ({ planId: p.planId, planName: p.planName, verdict: p.verdict })),
      run: c.run,
      plan: c.plan
        ? {
            id: c.plan.id,
            name: c.plan.name,
            kind: c.plan.kind,
            durationH: c.plan.durationH,
            acceptNumber: c.plan.acceptNumber,
            sampleSize: c.plan.sampleSize,
            chamberC: c.plan.chamberC,
          }
        : null,
      devicesOnTest: c.lotDevices.length,
      fails: c.fails,
      latestReadPointH: c.latestH,
      latestHfeChangePct: latest?.hfeChangePct?.mean ?? null,
      latestIcboRatio: latest?.icboRatio?.median ?? null,
      pseudoFailureH: c.pseudoFailureH,
      pseudoFailureParameter: c.pseudoFailureParameter,
      hfeLimitPct: c.plan?.criteria.hfeChangePct ?? null,
      hfeTrend: c.readPoints
        .filter((r) => r.hours === 0 || r.hfeChangePct)
        .map((r) => ({ hours: r.hours, value: r.hours === 0 ? 0 : r.hfeChangePct!.mean })),
    };
  }

  async lots(filter: { deviceTypeId?: string; verdict?: LotVerdict }): Promise<LotSummary[]> {
    const all = await this.parts.lots(filter.deviceTypeId ? [filter.deviceTypeId] : undefined);
    return all.filter((a) => !filter.verdict || a.verdict === filter.verdict).map((a) => this.toSummary(a));
  }

  /**
   * What a lot verdict stands on, as judged: the lot's evidence (the contract judgeLot reads) and
   * the verdict it gave. A signature's hash covers exactly this (server/modules/signoff).
   */
  async judgedEvidence(lotId: string): Promise<{ lotCode: string; verdict: LotVerdict; evidence: LotEvidence }> {
    const [part] = await this.parts.get({ lotId });
    const a = part?.lot(lotId);
    if (!a) throw notFound('The lot');
    return { lotCode: a.core.lot.code, verdict: a.verdict, evidence: a.evidence };
  }

  /** A lot's judgement with the evidence it was judged on (make-up planning reads one plan's sample from it). */
  async lotJudgement(lotId: string): Promise<{ lotCode: string; judgement: LotJudgement; evidence: LotEvidence } | null> {
    const [part] = await this.parts.get({ lotId });
    const a = part?.lot(lotId);
    return a ? { lotCode: a.core.lot.code, judgement: a.judgement, evidence: a.evidence } : null;
  }

  async lot(lotId: string): Promise<LotDetail> {
    const [part] = await this.parts.get({ lotId });
    const a = part?.lot(lotId);
    if (!a) throw notFound('The lot');
    const c = a.core;
    const plans: LotPlanView[] = a.judgement.plans.map((p) => {
      const pe = a.evidence.plans.find((x) => x.plan.planId === p.planId)!;
      const { fit, unavailable } = planFit({ plan: pe.plan, devices: countedExposure(pe, p), failures: p.exposure.failures });
      return { ...p, fit, fitUnavailable: unavailable };
    });
    return {
      ...this.toSummary(a),
      criteria: c.plan?.criteria ?? null,
      readPointsH: c.plan ? [...c.plan.readPointsH].sort((x, y) => x - y) : [],
      readPoints: c.readPoints,
      trends: c.trends,
      plans,
      fit: plans.find((p) => p.planId === c.plan?.id)?.fit ?? null,
      devices: c.lotDevices,
      gainReference: { ...a.gainReference, normalisedReadings: c.normalisedReadings },
      otherRuns: a.otherRuns,
      caution: LOT_CAUTION,
      records: {
        corrections: (await lotCorrectedVersions(this.ds.manager, lotId)).map(lotVersionView),
        deviations: (await recordDeviationVersions(this.ds.manager, { lotId })).map(lotVersionView),
      },
    };
  }

  async deviceTypes(q: { ltpdPct: number; acceptNumber: number }): Promise<DeviceTypeSummary[]> {
    const types = await this.ds.getRepository(DeviceTypeEntity).find({ order: { partNumber: 'ASC' } });
    const parts = new Map((await this.parts.get({ typeIds: types.map((t) => t.id) })).map((p) => [p.deviceTypeId, p]));
    return types.map((t) => this.typeSummary(t, parts.get(t.id)?.all() ?? [], q));
  }

  async deviceType(id: string, q: { ltpdPct: number; acceptNumber: number }): Promise<DeviceTypeSummary> {
    const t = await this.ds.getRepository(DeviceTypeEntity).findOne({ where: { id } });
    if (!t) throw notFound('The device type');
    const [part] = await this.parts.get({ typeIds: [id] });
    return this.typeSummary(t, part?.all() ?? [], q);
  }

  /**
   * One failure rate per mechanism (never pooled across mechanisms): over every lot and plan with
   * readings that stress it, each device's equivalent hours from its own junction history
   * (shared/reliability/mechanisms), and the χ² upper bound χ²(CL; 2r+2) / (2·Σ t_eq) × 10⁹ (JESD85).
   */
  private typeSummary(t: DeviceTypeEntity, lots: Analysed[], q: { ltpdPct: number; acceptNumber: number }): DeviceTypeSummary {
    const byPlan = new Map<string, { acc: PlanAcceleration; devices: DeviceExposure[]; plan: MechanismPlan }>();
    for (const a of lots) {
      for (const p of a.judgement.plans) {
        const pe = a.evidence.plans.find((x) => x.plan.planId === p.planId)!;
        const pc = pe.plan;
        if (p.latestH === null || p.exposure.deviceHours <= 0) continue;
        const entry = byPlan.get(pc.planId) ?? {
          plan: pc,
          devices: [],
          acc: {
            planId: pc.planId,
            planName: pc.name,
            kind: pc.kind,
            eaEv: pc.eaEv,
            useC: pc.useC,
            stressC: pc.chamberC,
            stressBasis: '',
            mechanism: MECHANISM_OF_KIND[pc.kind],
            accelerationFactor: 0,
            devices: 0,
            deviceHours: 0,
            equivalentDeviceHours: 0,
            failures: 0,
          },
        };
        entry.devices.push(...countedExposure(pe, p));
        entry.acc.failures += p.exposure.failures;
        byPlan.set(pc.planId, entry);
      }
    }
    const perPlan = [...byPlan.values()].map(({ acc, devices, plan }) => {
      const x = mechanismExposure(plan, devices);
      acc.devices = x.devices;
      acc.deviceHours = x.deviceHours;
      acc.equivalentDeviceHours = x.equivalentDeviceHours;
      acc.accelerationFactor = x.deviceHours > 0 ? x.equivalentDeviceHours / x.deviceHours : 0;
      acc.stressC = x.tjMeanC ?? plan.chamberC;
      acc.stressBasis = junctionBasis(x);
      return { acc, x };
    });
    const accelerations = perPlan.map((p) => p.acc);
    const failures = accelerations.reduce((s, x) => s + x.failures, 0);
    const mechanisms: MechanismFitSummary[] = STRESS_MECHANISMS.flatMap((mech) => {
      const mine = perPlan.filter((p) => p.x.mechanism === mech);
      if (!mine.length) return [];
      const unavailable = mine.find((p) => p.x.unavailable)?.x.unavailable ?? null;
      const r = mine.reduce((s, p) => s + p.acc.failures, 0);
      const eq = unavailable ? 0 : mine.reduce((s, p) => s + p.x.equivalentDeviceHours, 0);
      const fitAt = (cl: number) => (eq > 0 ? (chiSquareQuantile(cl, 2 * r + 2) / (2 * eq)) * 1e9 : null);
      return [
        {
          mechanism: mech,
          label: mine[0].x.label,
          model: mine[0].x.model,
          parameters: mine[0].x.parameters,
          plans: mine.length,
          devices: mine.reduce((s, p) => s + p.x.devices, 0),
          deviceHours: mine.reduce((s, p) => s + p.x.deviceHours, 0),
          equivalentDeviceHours: eq,
          failures: r,
          fit60: fitAt(0.6),
          fit90: fitAt(0.9),
          unavailable,
        },
      ];
    });
    const count = (v: LotVerdict) => lots.filter((a) => a.verdict === v).length;
    const k = constantsUsed();
    return {
      deviceTypeId: t.id,
      partNumber: t.partNumber,
      description: t.description,
      lots: lots.length,
      lotsTested: lots.filter((a) => a.verdict !== 'untested').length,
      lotsPassed: count('passed'),
      lotsDrifting: count('drifting'),
      lotsFailed: count('failed'),
      lotsInProgress: count('in-progress'),
      lotsIncomplete: count('incomplete'),
      lotsInsufficientSample: count('insufficient-sample'),
      devicesTested: accelerations.reduce((s, x) => s + x.devices, 0),
      failures,
      deviceHours: accelerations.reduce((s, x) => s + x.deviceHours, 0),
      mechanisms,
      accelerations,
      nextQualification: {
        ltpdPct: q.ltpdPct,
        confidence: 0.9,
        acceptNumber: q.acceptNumber,
        sampleSize: sampleSizeForLtpd({ ltpd: q.ltpdPct / 100, confidence: 0.9, acceptNumber: q.acceptNumber }),
        method: 'Smallest n with BinomCDF(c; n, LTPD) ≤ 0.10 (MIL-PRF-19500 LTPD sampling, exact binomial)',
      },
      constants: { boltzmannEvPerK: k.boltzmannEvPerK, kelvinOffset: k.kelvinOffset, source: k.boltzmannSource },
      lotVerdicts: lots.map((a) => ({ lotId: a.core.lot.id, lotCode: a.core.lot.code, verdict: a.verdict })),
    };
  }
}

/** The devices the verdict counts for a plan (its exposure), with their credited hours and histories. */
function countedExposure(pe: PlanEvidence, p: PlanJudgement): DeviceExposure[] {
  const counted = new Set(p.devices.map((d) => `${d.runId}:${d.deviceId}`));
  return pe.devices
    .filter((d) => counted.has(`${d.runId}:${d.deviceId}`))
    .map((d) => ({ creditedHours: d.creditedHours, segments: d.stressSegments ?? null, cycling: d.cycling ?? null }));
}
