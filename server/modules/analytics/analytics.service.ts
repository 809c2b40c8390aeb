import { In, type DataSource } from 'typeorm';
import type { DeviceTypeSummary, LotDetail, LotSummary, LotVerdict, PlanAcceleration } from '../../../shared/schemas/analytics';
import type { Criteria } from '../../../shared/schemas/plans';
import { chiSquareQuantile, constantsUsed, sampleSizeForLtpd, arrheniusFactor } from '../../../shared/reliability';
import {
  DeviceTypeEntity,
  LotEntity,
  MeasurementEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  StressPlanEntity,
} from '../../db/entities';
import { notFound } from '../../http/errors';
import { runDrift } from '../measurements/measurements.service';
import { runDevices } from '../measurements/run-data';
import { controlChecks, judgeLot, LOT_CAUTION, lotCore, lotFit, stressTemperature, type LotCore } from './lot-analysis';

interface Analysed {
  core: LotCore;
  verdict: LotVerdict;
  reasons: string[];
  control: ReturnType<typeof controlChecks>;
  otherRuns: Array<{ id: string; code: string; state: string }>;
  gainReference: { referenceC: number; xtb: number };
}

export class AnalyticsService {
  constructor(private readonly ds: DataSource) {}

  /**
   * Every lot (optionally of one device type) analysed on its most recent run that has readings
   * for it (else its most recent run that was not aborted). Lots of the same type are analysed
   * together because each lot is judged against the others.
   */
  private async analyse(deviceTypeId?: string): Promise<Analysed[]> {
    const m = this.ds.manager;
    const types = await m.find(DeviceTypeEntity, deviceTypeId ? { where: { id: deviceTypeId } } : {});
    if (!types.length) return [];
    const typeById = new Map(types.map((t) => [t.id, t]));
    const lots = await m.find(LotEntity, { where: { deviceTypeId: In(types.map((t) => t.id)) }, order: { code: 'ASC' } });
    if (!lots.length) return [];
    const runLots = await m.find(RunLotEntity, { where: { lotId: In(lots.map((l) => l.id)) } });
    const runIds = [...new Set(runLots.map((r) => r.runId))];
    const runs = runIds.length ? await m.find(RunEntity, { where: { id: In(runIds) } }) : [];
    const runById = new Map(runs.map((r) => [r.id, r]));
    const plans = runs.length ? await m.find(StressPlanEntity, { where: { id: In([...new Set(runs.map((r) => r.planId))]) } }) : [];
    const planById = new Map(plans.map((p) => [p.id, p]));
    const devicesByRun = await runDevices(m, runIds);
    const measurements = runIds.length ? await m.find(MeasurementEntity, { where: { runId: In(runIds) } }) : [];
    const msByRun = new Map<string, MeasurementEntity[]>();
    for (const x of measurements) msByRun.set(x.runId, [...(msByRun.get(x.runId) ?? []), x]);
    const measuredLotsByRun = new Map<string, Set<string>>();
    for (const [rid, ms] of msByRun) {
      const lotOf = new Map((devicesByRun.get(rid) ?? []).map((d) => [d.deviceId, d.lotId]));
      measuredLotsByRun.set(rid, new Set(ms.map((x) => lotOf.get(x.deviceId)).filter((x): x is string => !!x)));
    }

    const drift = new Map<string, ReturnType<typeof runDrift>>();
    const driftOf = (run: RunEntity) => {
      if (!drift.has(run.id)) {
        const plan = planById.get(run.planId)!;
        const deviceType = typeById.get(plan.deviceTypeId) ?? types[0];
        drift.set(
          run.id,
          runDrift(
            { run, plan, deviceType, rig: null as RigEntity | null, lots: [], devices: devicesByRun.get(run.id) ?? [] },
            msByRun.get(run.id) ?? [],
          ),
        );
      }
      return drift.get(run.id)!;
    };

    const cores: Array<{ core: LotCore; otherRuns: Analysed['otherRuns']; gain: Analysed['gainReference'] }> = lots.map((lot) => {
      const type = typeById.get(lot.deviceTypeId)!;
      const lotRuns = runLots
        .filter((rl) => rl.lotId === lot.id)
        .map((rl) => runById.get(rl.runId)!)
        .filter(Boolean)
        .sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime());
      const chosen =
        lotRuns.find((r) => measuredLotsByRun.get(r.id)?.has(lot.id)) ?? lotRuns.find((r) => r.state !== 'aborted') ?? null;
      const plan = chosen ? planById.get(chosen.planId)! : null;
      const core = lotCore({
        lot: { id: lot.id, code: lot.code, deviceTypeId: lot.deviceTypeId, partNumber: type.partNumber, dateCode: lot.dateCode },
        run: chosen ? { id: chosen.id, code: chosen.code, state: chosen.state, stressHours: chosen.stressHours } : null,
        plan: plan
          ? {
              id: plan.id,
              name: plan.name,
              kind: plan.kind,
              durationH: plan.durationH,
              acceptNumber: plan.acceptNumber,
              sampleSize: plan.sampleSize,
              chamberC: plan.chamberC,
              eaEv: plan.eaEv,
              useC: plan.useC,
              ...stressTemperature(plan),
              readPointsH: [...plan.readPointsH],
              criteria: plan.criteria as Criteria,
            }
          : null,
        devices: chosen ? driftOf(chosen).devices.filter((d) => d.lotId === lot.id) : [],
      });
      return {
        core,
        otherRuns: lotRuns.filter((r) => r.id !== chosen?.id).map((r) => ({ id: r.id, code: r.code, state: r.state })),
        gain: { referenceC: type.betaRefTC, xtb: type.xtb },
      };
    });
    const all = cores.map((c) => c.core);
    return cores.map(({ core, otherRuns, gain }) => {
      const control = controlChecks(core, all);
      const { verdict, reasons } = judgeLot(core, control);
      return { core, verdict, reasons, control, otherRuns, gainReference: gain };
    });
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
      verdict: a.verdict,
      reasons: a.reasons,
      run: c.run,
      plan: c.plan
        ? { id: c.plan.id, name: c.plan.name, kind: c.plan.kind, durationH: c.plan.durationH, acceptNumber: c.plan.acceptNumber, sampleSize: c.plan.sampleSize, chamberC: c.plan.chamberC }
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
    const all = await this.analyse(filter.deviceTypeId);
    return all.filter((a) => !filter.verdict || a.verdict === filter.verdict).map((a) => this.toSummary(a));
  }

  async lot(lotId: string): Promise<LotDetail> {
    const lot = await this.ds.getRepository(LotEntity).findOne({ where: { id: lotId } });
    if (!lot) throw notFound('The lot');
    const a = (await this.analyse(lot.deviceTypeId)).find((x) => x.core.lot.id === lotId)!;
    const c = a.core;
    return {
      ...this.toSummary(a),
      criteria: c.plan?.criteria ?? null,
      readPointsH: c.plan ? [...c.plan.readPointsH].sort((x, y) => x - y) : [],
      readPoints: c.readPoints,
      trends: c.trends,
      control: a.control,
      fit: lotFit(c),
      devices: c.lotDevices,
      gainReference: { ...a.gainReference, normalisedReadings: c.normalisedReadings },
      otherRuns: a.otherRuns,
      caution: LOT_CAUTION,
    };
  }

  async deviceTypes(q: { ltpdPct: number; acceptNumber: number }): Promise<DeviceTypeSummary[]> {
    const types = await this.ds.getRepository(DeviceTypeEntity).find({ order: { partNumber: 'ASC' } });
    const all = await this.analyse();
    return types.map((t) => this.typeSummary(t, all.filter((a) => a.core.lot.deviceTypeId === t.id), q));
  }

  async deviceType(id: string, q: { ltpdPct: number; acceptNumber: number }): Promise<DeviceTypeSummary> {
    const t = await this.ds.getRepository(DeviceTypeEntity).findOne({ where: { id } });
    if (!t) throw notFound('The device type');
    return this.typeSummary(t, await this.analyse(id), q);
  }

  /**
   * Pooled over every lot with readings: device-hours N·H per lot (H = its latest read point),
   * each plan's Arrhenius factor (plan Ea and use temperature vs chamber — junction on powered
   * stresses, see stressTemperature), and the χ² upper bound
   * χ²(CL; 2r+2) / (2·Σ N·H·AF) × 10⁹ (JESD85).
   */
  private typeSummary(t: DeviceTypeEntity, lots: Analysed[], q: { ltpdPct: number; acceptNumber: number }): DeviceTypeSummary {
    const byPlan = new Map<string, PlanAcceleration>();
    for (const a of lots) {
      const c = a.core;
      if (!c.plan || c.latestH === null || c.latestH <= 0) continue;
      const n = c.lotDevices.filter((d) => d.status !== 'not-measured').length;
      const af = arrheniusFactor({ eaEv: c.plan.eaEv, useC: c.plan.useC, stressC: c.plan.stressC });
      const acc = byPlan.get(c.plan.id) ?? {
        planId: c.plan.id,
        planName: c.plan.name,
        kind: c.plan.kind,
        eaEv: c.plan.eaEv,
        useC: c.plan.useC,
        stressC: c.plan.stressC,
        stressBasis: c.plan.stressBasis,
        accelerationFactor: af,
        devices: 0,
        deviceHours: 0,
        equivalentDeviceHours: 0,
        failures: 0,
      };
      acc.devices += n;
      acc.deviceHours += n * c.latestH;
      acc.equivalentDeviceHours += n * c.latestH * af;
      acc.failures += c.fails;
      byPlan.set(c.plan.id, acc);
    }
    const accelerations = [...byPlan.values()];
    const failures = accelerations.reduce((s, x) => s + x.failures, 0);
    const eq = accelerations.reduce((s, x) => s + x.equivalentDeviceHours, 0);
    const fitAt = (cl: number) => (eq > 0 ? (chiSquareQuantile(cl, 2 * failures + 2) / (2 * eq)) * 1e9 : null);
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
      devicesTested: accelerations.reduce((s, x) => s + x.devices, 0),
      failures,
      deviceHours: accelerations.reduce((s, x) => s + x.deviceHours, 0),
      equivalentDeviceHours: eq,
      fit60: fitAt(0.6),
      fit90: fitAt(0.9),
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
