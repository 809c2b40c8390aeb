/** Entities → API objects for runs (entities never leave the server). Batched for lists. */
import { In, type EntityManager } from 'typeorm';
import { countsCycles, cycleBand, planBiasV, readPointCycles } from '../../../shared/scheduling';
import { socketCyclesOfRun } from './cycles.data';
import { recentChamberSamples } from './chamber.data';
import { tcPeriodMin } from '../../../shared/chamber/profile';
import { isUnbiasedKindName } from '../../../shared/domain/stress';
import { runCodesOfSamples, runSocketRows, runsOfSample, socketCountsOfRuns, socketsHeldOnRig } from './runs.data';
import {
  allowedActions,
  RUN_STATE_LABEL,
  type Run,
  type RunAuditEntry,
  type RunChamberCycles,
  type RunChamberView,
  type RunCycles,
  type RunDetail,
  type RunPlanRef,
  type RunSocket,
  type SampleView,
} from '../../../shared/schemas/runs';
import {
  AuditLogEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  SampleEntity,
  StressPlanEntity,
  UserEntity,
} from '../../db/entities';

const iso = (d: Date | null | undefined) => (d ? d.toISOString() : null);

export function sortedReadPoints(plan: Pick<StressPlanEntity, 'readPointsH'>): number[] {
  return [...plan.readPointsH].sort((a, b) => a - b);
}

export function planRef(p: StressPlanEntity): RunPlanRef {
  return {
    id: p.id,
    planKey: p.planKey,
    name: p.name,
    version: p.version,
    kind: p.kind,
    chamberC: p.chamberC,
    chamberBand: p.chamberBand,
    humidityPct: p.humidityPct,
    durationH: p.durationH,
    readPointsH: sortedReadPoints(p),
    biasV: planBiasV(p),
    checkStatus: p.checkResult?.status ?? 'none',
  };
}

export async function toRuns(m: EntityManager, runs: RunEntity[]): Promise<Run[]> {
  if (!runs.length) return [];
  const ids = runs.map((r) => r.id);
  const planIds = [...new Set(runs.map((r) => r.planId))];
  const rigIds = [...new Set(runs.map((r) => r.rigId).filter((x): x is string => !!x))];
  const plans = new Map((await m.find(StressPlanEntity, { where: { id: In(planIds) } })).map((p) => [p.id, p]));
  const types = new Map(
    (await m.find(DeviceTypeEntity, { where: { id: In([...new Set([...plans.values()].map((p) => p.deviceTypeId))]) } })).map((t) => [
      t.id,
      t,
    ]),
  );
  const rigs = new Map((rigIds.length ? await m.find(RigEntity, { where: { id: In(rigIds) } }) : []).map((r) => [r.id, r]));
  const runLots = await m.find(RunLotEntity, { where: { runId: In(ids) } });
  const lots = new Map(
    (runLots.length ? await m.find(LotEntity, { where: { id: In([...new Set(runLots.map((l) => l.lotId))]) } }) : []).map((l) => [l.id, l]),
  );
  const counts = await socketCountsOfRuns(m, ids);
  const countBy = new Map(counts.map((c) => [c.run_id, c]));
  const sampleIds = [...new Set(runs.map((r) => r.sampleId).filter((x): x is string => !!x))];
  const samples = new Map((sampleIds.length ? await m.find(SampleEntity, { where: { id: In(sampleIds) } }) : []).map((x) => [x.id, x]));
  const sampleRuns = sampleIds.length ? await runCodesOfSamples(m, sampleIds) : [];
  const codesBySample = new Map(sampleRuns.map((x) => [x.sample_id, x.codes]));
  const userIds = [...new Set(runs.map((r) => r.overrideById).filter((x): x is string => !!x))];
  const users = new Map((userIds.length ? await m.find(UserEntity, { where: { id: In(userIds) } }) : []).map((u) => [u.id, u]));

  return runs.map((r) => {
    const plan = plans.get(r.planId)!;
    const rps = sortedReadPoints(plan);
    const rig = r.rigId ? rigs.get(r.rigId) : undefined;
    const c = countBy.get(r.id);
    const last = r.nextReadPoint > 0 ? rps[Math.min(r.nextReadPoint, rps.length) - 1] : null;
    return {
      id: r.id,
      code: r.code,
      state: r.state,
      stateLabel: RUN_STATE_LABEL[r.state],
      plan: planRef(plan),
      rig: rig ? { id: rig.id, code: rig.code, name: rig.name, socketCount: rig.socketCount, online: rig.online } : null,
      lots: runLots
        .filter((l) => l.runId === r.id)
        .map((l) => lots.get(l.lotId)!)
        .filter(Boolean)
        .map((l) => ({ id: l.id, code: l.code }))
        .sort((a, b) => a.code.localeCompare(b.code)),
      partNumber: types.get(plan.deviceTypeId)?.partNumber ?? '',
      sampleSize: r.sampleSize,
      sample: sampleRef(r.sampleId ? samples.get(r.sampleId) : undefined, r.sampleId ? (codesBySample.get(r.sampleId) ?? []) : []),
      loadedCount: c?.loaded ?? 0,
      trippedCount: c?.tripped ?? 0,
      scheduledStart: iso(r.scheduledStart),
      scheduledEnd: iso(r.scheduledEnd),
      startedAt: iso(r.startedAt),
      finishedAt: iso(r.finishedAt),
      stateChangedAt: r.stateChangedAt.toISOString(),
      stressHours: r.stressHours,
      targetH: plan.durationH,
      cycles: runCycles(r, plan, rps),
      chamberCycles: runChamberCycles(r, plan, rps),
      nextReadPointH: r.nextReadPoint < rps.length ? rps[r.nextReadPoint] : null,
      lastReadPointH: last ?? null,
      heatingSince: iso(r.heatingSince),
      ambientReachedAt: iso(r.ambientReachedAt),
      biasRemovedAt: iso(r.biasRemovedAt),
      holdPhase: r.state === 'read-hold' || r.state === 'cooling' ? r.holdPhase : null,
      holdPhaseSince: r.state === 'read-hold' || r.state === 'cooling' ? iso(r.holdPhaseSince) : null,
      abortReason: r.abortReason,
      fault: r.faultAt && r.faultReason ? { at: r.faultAt.toISOString(), reason: r.faultReason } : null,
      override: r.overrideReason
        ? { reason: r.overrideReason, byName: r.overrideById ? (users.get(r.overrideById)?.name ?? null) : null }
        : null,
      allowedActions: [...allowedActions(r.state)],
      rowVersion: r.rowVersion,
      createdAt: r.createdAt.toISOString(),
      dueAt: iso(r.dueAt),
      priority: r.priority,
    };
  });
}

/** A cycling run's count against its target and next read point (shared/scheduling/cycling.ts). */
function runCycles(r: RunEntity, plan: StressPlanEntity, rps: number[]): RunCycles | null {
  if (!countsCycles(plan)) return null;
  const next = r.nextReadPoint < rps.length ? rps[r.nextReadPoint] : null;
  return {
    done: r.cyclesDone,
    target: plan.cycle.cycles,
    nextReadPointCycles: next === null ? null : readPointCycles(plan, next),
    deltaTjC: plan.cycle.deltaTjC,
    band: cycleBand(plan.cycle.deltaTjC),
    onMin: plan.cycle.onMin,
    offMin: plan.cycle.offMin,
  };
}

/** A temperature-cycling run's count from the chamber's load temperature (server/modules/runs/chamber-engine.ts). */
function runChamberCycles(r: RunEntity, plan: StressPlanEntity, rps: number[]): RunChamberCycles | null {
  const tc = plan.kind === 'tc' ? plan.thermalCycle : null;
  if (!tc) return null;
  const next = r.nextReadPoint < rps.length ? rps[r.nextReadPoint] : null;
  const asCycles = (h: number) =>
    readPointCycles({ durationH: plan.durationH, cycle: { onMin: 1, offMin: 1, deltaTjC: 1, cycles: tc.cycles } }, h);
  return {
    done: r.cyclesDone,
    target: tc.cycles,
    nextReadPointCycles: next === null ? null : asCycles(next),
    lowC: tc.lowC,
    highC: tc.highC,
    dwellMin: tc.dwellMin,
    rampKPerMin: tc.rampKPerMin,
    periodMin: tcPeriodMin(tc),
    phase: r.chamberCounter?.phase ?? null,
    minSwingK: r.chamberCounter?.minSwingK ?? null,
    excursions: r.chamberCounter?.excursions ?? 0,
  };
}

/** The chamber's latest report and recent profile, for an unbiased run's page. */
async function chamberView(m: EntityManager, run: RunEntity): Promise<RunChamberView> {
  const rows = await recentChamberSamples(m, run.rigId!, CHAMBER_PROFILE_POINTS);
  const last = rows[rows.length - 1];
  return {
    latest: last
      ? {
          at: last.ts.toISOString(),
          airC: last.airC,
          loadC: last.loadC,
          setpointC: last.setpointC,
          humidityPct: last.humidityPct,
          pressureKPa: last.pressureKPa,
        }
      : null,
    profile: rows.map((x) => ({ clockMin: x.clockS / 60, airC: x.airC, loadC: x.loadC })),
  };
}
/** Reports shown in a run page's chamber profile. */
export const CHAMBER_PROFILE_POINTS = 240;

function sampleRef(s: SampleEntity | undefined, runCodes: string[]): Run['sample'] {
  if (!s) return null;
  return { id: s.id, plannedSize: s.plannedSize, bookedSize: s.bookedSize, runCodes, deviation: s.deviationReason };
}

/** A sample with its runs and the deviation (who, when, why). */
export async function sampleView(m: EntityManager, sampleId: string): Promise<SampleView> {
  const s = await m.findOneByOrFail(SampleEntity, { id: sampleId });
  const runs = await runsOfSample(m, sampleId);
  const by = s.deviationById ? await m.findOneBy(UserEntity, { id: s.deviationById }) : null;
  return {
    id: s.id,
    plannedSize: s.plannedSize,
    bookedSize: s.bookedSize,
    deviation: s.deviationReason ? { reason: s.deviationReason, byName: by?.name ?? null, at: iso(s.deviationAt)! } : null,
    runs: runs.map((r) => ({ id: r.id, code: r.code, rigCode: r.rig_code, sampleSize: Number(r.sample_size), state: r.state })),
  };
}

export async function runSockets(m: EntityManager, runId: string): Promise<RunSocket[]> {
  const rows = await runSocketRows(m, runId);
  return rows.map((x) => ({
    socket: Number(x.socket),
    deviceId: x.device_id,
    serial: x.serial,
    lotCode: x.lot,
    accruedHours: Number(x.hours),
    tripped: Boolean(x.tripped),
    tripReason: x.reason ?? null,
    failedAtH: x.failed === null ? null : Number(x.failed),
  }));
}

export async function runAudit(m: EntityManager, runId: string): Promise<RunAuditEntry[]> {
  const rows = await m.find(AuditLogEntity, { where: { entity: 'run', entityId: runId }, order: { id: 'DESC' }, take: 200 });
  return rows.map((a) => ({
    id: String(a.id),
    at: a.at.toISOString(),
    actor: a.actor,
    action: a.action,
    reason: a.reason,
    details: a.details,
  }));
}

/** Sockets of the rig held by other runs that sit on it now. */
export async function socketsTakenOnRig(m: EntityManager, rigId: string, exceptRunId: string): Promise<Map<number, string>> {
  const rows = await socketsHeldOnRig(m, rigId, exceptRunId);
  return new Map(rows.map((x) => [Number(x.socket_index), x.code]));
}

export async function toRunDetail(m: EntityManager, run: RunEntity): Promise<RunDetail> {
  const [base] = await toRuns(m, [run]);
  const taken = run.rigId ? await socketsTakenOnRig(m, run.rigId, run.id) : new Map<number, string>();
  const sockets = await runSockets(m, run.id);
  if (base.cycles) {
    const cycles = new Map((await socketCyclesOfRun(m, run.id)).map((c) => [c.socket, c]));
    for (const s of sockets) {
      const c = cycles.get(s.socket);
      if (c) s.cycles = { done: c.cyclesDone, missed: c.cyclesMissed, lastDTjLowC: c.lastDTjLowC, lastDTjHighC: c.lastDTjHighC };
    }
  }
  const plan = await m.findOne(StressPlanEntity, { where: { id: run.planId }, select: { id: true, kind: true } });
  return {
    ...base,
    chamber: run.rigId && plan && isUnbiasedKindName(plan.kind) ? await chamberView(m, run) : null,
    sockets,
    audit: await runAudit(m, run.id),
    socketsTaken: [...taken.keys()].sort((a, b) => a - b),
  };
}
