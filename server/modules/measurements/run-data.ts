/**
 * Small read queries about runs that the measurements and analytics modules need. The runs module
 * (another owner) manages runs; here we only read run, plan, run_lots and run_sockets rows.
 * A run's devices are its socket map (run_sockets) joined to devices; time zero = read point 0.
 */
import { In, type EntityManager } from 'typeorm';
import {
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  StressPlanEntity,
} from '../../db/entities';
import { notFound } from '../../http/errors';

export interface RunDeviceRow {
  deviceId: string;
  serial: string;
  lotId: string;
  lotCode: string;
  socketIndex: number;
  tripped: boolean;
  failedAtH: number | null;
}

export interface RunBundle {
  run: RunEntity;
  plan: StressPlanEntity;
  deviceType: DeviceTypeEntity;
  rig: RigEntity | null;
  lots: LotEntity[];
  devices: RunDeviceRow[];
}

export async function loadRunBundle(m: EntityManager, runId: string): Promise<RunBundle> {
  const run = await m.findOne(RunEntity, { where: { id: runId } });
  if (!run) throw notFound('The run');
  const plan = await m.findOneOrFail(StressPlanEntity, { where: { id: run.planId } });
  const deviceType = await m.findOneOrFail(DeviceTypeEntity, { where: { id: plan.deviceTypeId } });
  const rig = run.rigId ? await m.findOne(RigEntity, { where: { id: run.rigId } }) : null;
  const runLots = await m.find(RunLotEntity, { where: { runId } });
  const lots = runLots.length ? await m.find(LotEntity, { where: { id: In(runLots.map((l) => l.lotId)) }, order: { code: 'ASC' } }) : [];
  const devices = await runDevices(m, [runId]);
  return { run, plan, deviceType, rig, lots, devices: devices.get(runId) ?? [] };
}

/** Socket map of each run joined to devices and lots, ordered by socket. */
export async function runDevices(m: EntityManager, runIds: string[]): Promise<Map<string, RunDeviceRow[]>> {
  const out = new Map<string, RunDeviceRow[]>();
  if (!runIds.length) return out;
  const rows: Array<RunDeviceRow & { runId: string }> = await m
    .createQueryBuilder(RunSocketEntity, 's')
    .innerJoin(DeviceEntity, 'd', 'd.id = s.deviceId')
    .innerJoin(LotEntity, 'l', 'l.id = d.lotId')
    .select('s.runId', 'runId')
    .addSelect('s.deviceId', 'deviceId')
    .addSelect('d.serial', 'serial')
    .addSelect('d.lotId', 'lotId')
    .addSelect('l.code', 'lotCode')
    .addSelect('s.socketIndex', 'socketIndex')
    .addSelect('s.tripped', 'tripped')
    .addSelect('s.failedAtH', 'failedAtH')
    .where('s.runId IN (:...runIds)', { runIds })
    .orderBy('s.socketIndex', 'ASC')
    .getRawMany();
  for (const r of rows) {
    const list = out.get(r.runId) ?? [];
    list.push({
      deviceId: r.deviceId,
      serial: r.serial,
      lotId: r.lotId,
      lotCode: r.lotCode,
      socketIndex: Number(r.socketIndex),
      tripped: Boolean(r.tripped),
      failedAtH: r.failedAtH === null ? null : Number(r.failedAtH),
    });
    out.set(r.runId, list);
  }
  return out;
}
