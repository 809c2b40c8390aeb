/**
 * One device's whole record: its lot and traceability, each socket it sat in with the run's drift
 * of its readings (measurements.drift: the same figures the readings screen shows), every version
 * of each reading, the alarms of its socket, trips and dispositions.
 */
import type { DataSource } from 'typeorm';
import { DISPOSITION_LABEL, type DispositionKind } from '../../../shared/evidence';
import type { DeviceHistoryView, DeviceSocketStint } from '../../../shared/schemas/device-history';
import { notFound } from '../../http/errors';
import type { MeasurementsService } from '../measurements/measurements.service';
import { deviceAlarms, deviceDispositions, deviceSockets, deviceWithLot } from './device-history.data';

const iso = (d: Date | string | null) => (d === null ? null : new Date(d).toISOString());

export class DeviceHistoryService {
  constructor(
    private readonly ds: DataSource,
    private readonly measurements: MeasurementsService,
  ) {}

  async history(deviceId: string): Promise<DeviceHistoryView> {
    const m = this.ds.manager;
    const [d] = await deviceWithLot(m, deviceId);
    if (!d) throw notFound('The device');
    const [sockets, alarms, dispositions] = await Promise.all([
      deviceSockets(m, deviceId),
      deviceAlarms(m, deviceId),
      deviceDispositions(m, deviceId),
    ]);
    const stints: DeviceSocketStint[] = [];
    for (const s of sockets) {
      const drift = await this.measurements.drift(s.run_id);
      const mine = drift.devices.find((x) => x.deviceId === deviceId);
      const versions = (await this.measurements.history(s.run_id, deviceId)).versions;
      stints.push({
        runId: s.run_id,
        runCode: s.run_code,
        runState: s.state,
        planName: s.plan_name,
        planKind: s.plan_kind,
        rigCode: s.rig_code,
        socketIndex: Number(s.socket_index),
        from: iso(s.started_at),
        to: iso(s.tripped && s.tripped_at ? s.tripped_at : s.finished_at),
        creditedHours: Number(s.accrued_hours),
        tripped: Boolean(s.tripped),
        trippedAt: iso(s.tripped_at),
        tripReason: s.trip_reason,
        failedAtH: s.failed_at_h === null ? null : Number(s.failed_at_h),
        firstFailedH: mine?.firstFailedH ?? null,
        status: mine?.status ?? 'not-judged',
        readPoints: mine?.readPoints ?? [],
        versions,
      });
    }
    return {
      deviceId,
      serial: d.serial,
      lot: {
        id: d.lot_id,
        code: d.lot_code,
        partNumber: d.part_number,
        deviceTypeId: d.device_type_id,
        dateCode: d.date_code,
        waferLot: d.wafer_lot,
        assemblyLot: d.assembly_lot,
        dieRevision: d.die_revision,
      },
      sockets: stints,
      alarms: alarms.map((a) => ({
        runCode: a.run_code,
        kind: a.kind,
        severity: a.severity,
        title: a.title,
        message: a.message,
        raisedAt: iso(a.raised_at)!,
        acknowledgedAt: iso(a.acknowledged_at),
        clearedAt: iso(a.cleared_at),
      })),
      dispositions: dispositions.map((x) => ({
        runCode: x.run_code,
        readPointH: Number(x.read_point_h),
        kind: x.kind,
        label: DISPOSITION_LABEL[x.kind as DispositionKind] ?? x.kind,
        reason: x.reason,
        byName: x.by_name,
        at: iso(x.at)!,
      })),
    };
  }
}
