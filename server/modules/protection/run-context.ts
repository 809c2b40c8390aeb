/**
 * What protection needs to know about a rig's active run: the plan (chamber set point, bias, kind)
 * and, per socket, the loaded device's thermal data (run_sockets → devices → lots → device_types).
 * Loaded once per run and cached; dropped when a run event names the rig, and re-read after a TTL.
 */
import { In } from 'typeorm';
import { ON_RIG_STATES } from '../../../shared/domain/run-states';
import { protectionLimitC, type ChamberBandK } from '../../../shared/domain/standards';
import { isReverseBiasKind } from '../../../shared/domain/stress';
import type { ProtectionDevice } from '../../../shared/safety/protection';
import type { Bias, PlanKind } from '../../../shared/schemas/plans';
import type { AppContext } from '../../context';
import { AlarmEntity, DeviceTypeEntity, RunEntity, RunSocketEntity, StressPlanEntity, type RunState } from '../../db/entities';

/** Run states in which the rig's sockets belong to the run (bias may be on). */

export interface SocketDevice {
  device: ProtectionDevice;
  serial: string;
  partNumber: string;
  /** Trips of this socket already recorded in this run (runaway-trip alarms). */
  trips: number;
  /** The run this socket's device belongs to: runs with the same chamber condition may share an oven. */
  runId: string;
  runCode: string;
}

export interface RunContext {
  runId: string;
  runCode: string;
  state: RunState;
  planKind: PlanKind;
  chamberC: number;
  /** The plan's chamber band (K below / above chamberC). */
  chamberBand: ChamberBandK;
  bias: Bias;
  /** The plan's part: used for an energised socket missing from the socket map. */
  planDevice: ProtectionDevice;
  planPartNumber: string;
  sockets: Map<number, SocketDevice>;
}

/** What the judge needs of a part: with `plan`, the run's hard limit (protectionLimitC: an HTRB at rating trips above its band, not at Tj max). */
export const deviceOf = (
  t: Pick<DeviceTypeEntity, 'tjMaxC' | 'thetaJcCPerW' | 'thetaJaCPerW'>,
  plan?: Pick<StressPlanEntity, 'kind' | 'chamberC' | 'chamberBand'>,
): ProtectionDevice => {
  const limit = plan
    ? protectionLimitC({ tjMaxC: t.tjMaxC, reverseBias: isReverseBiasKind(plan.kind), chamberC: plan.chamberC, band: plan.chamberBand })
    : t.tjMaxC;
  return {
    tjMaxC: limit,
    ...(limit > t.tjMaxC ? { ratedTjMaxC: t.tjMaxC } : {}),
    thetaJcCPerW: t.thetaJcCPerW,
    thetaJaCPerW: t.thetaJaCPerW,
  };
};

/**
 * The active runs on a rig with their merged socket map, or null when the rig has none. Runs may
 * share an oven only at the same chamber condition (scheduling rule), so the run-level fields come
 * from the most recently changed run and each socket carries its own run.
 */
export async function loadRunContext(ctx: AppContext, rigId: string): Promise<RunContext | null> {
  const m = ctx.ds.manager;
  const runs = await m.find(RunEntity, {
    where: { rigId, state: In([...ON_RIG_STATES]) },
    order: { stateChangedAt: 'DESC' },
  });
  if (runs.length === 0) return null;
  const run = runs[0];
  const plan = await m.findOne(StressPlanEntity, { where: { id: run.planId }, relations: { deviceType: true } });
  if (!plan || !plan.deviceType) return null;
  const runIds = runs.map((r) => r.id);
  const rows = await m.find(RunSocketEntity, {
    where: { runId: In(runIds) },
    relations: { device: { lot: { deviceType: true } } },
  });
  const tripCounts: Array<{ run_id: string; socket_index: number; n: number }> = await m
    .createQueryBuilder(AlarmEntity, 'a')
    .select('a.run_id', 'run_id')
    .addSelect('a.socket_index', 'socket_index')
    .addSelect('count(*)::int', 'n')
    .where('a.run_id IN (:...runIds)', { runIds })
    .andWhere(`a.kind = 'runaway-trip'`)
    .andWhere('a.socket_index IS NOT NULL')
    .groupBy('a.run_id')
    .addGroupBy('a.socket_index')
    .getRawMany();
  const trips = new Map(tripCounts.map((r) => [`${r.run_id}:${Number(r.socket_index)}`, Number(r.n)]));
  const codeOf = new Map(runs.map((r) => [r.id, r.code]));
  const sockets = new Map<number, SocketDevice>();
  for (const r of rows) {
    const type = r.device?.lot?.deviceType;
    sockets.set(r.socketIndex, {
      device: deviceOf(type ?? plan.deviceType, plan),
      serial: r.device?.serial ?? '?',
      partNumber: (type ?? plan.deviceType).partNumber,
      trips: trips.get(`${r.runId}:${r.socketIndex}`) ?? 0,
      runId: r.runId,
      runCode: codeOf.get(r.runId) ?? run.code,
    });
  }
  return {
    runId: run.id,
    runCode: run.code,
    state: run.state,
    planKind: plan.kind,
    chamberC: plan.chamberC,
    chamberBand: plan.chamberBand,
    bias: plan.bias,
    planDevice: deviceOf(plan.deviceType, plan),
    planPartNumber: plan.deviceType.partNumber,
    sockets,
  };
}

/** Is some run (other than finished/aborted/booked) holding this rig? */
export async function hasActiveRun(ctx: AppContext, rigId: string): Promise<boolean> {
  return (await ctx.ds.getRepository(RunEntity).count({ where: { rigId, state: In([...ON_RIG_STATES]) } })) > 0;
}
