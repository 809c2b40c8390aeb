/**
 * Evidence changes made by people: a device's disposition (lost, damaged, excluded, or what a trip
 * means), an engineer's confirmation of a reading whose conditions differ from time zero.
 * Each is audited in the same transaction; a refused request changes nothing.
 */
import type { DataSource } from 'typeorm';
import { DISPOSITION_LABEL, TRIP_DISPOSITIONS } from '../../../shared/evidence';
import type { SessionUser } from '../../../shared/schemas/auth';
import type {
  ConfirmReadingInput,
  Disposition,
  DispositionInput,
  EvidenceReading,
  RunCoverage,
  SampleEvidence,
  WithdrawDispositionInput,
} from '../../../shared/schemas/evidence';
import { DeviceDispositionEntity, MeasurementEntity, RunEntity, StressPlanEntity } from '../../db/entities';
import { conflict, notFound, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { refreshFirstFailures } from '../measurements/measurements.service';
import { loadRunBundle } from '../measurements/run-data';
import { coverageOf, evidenceDevices, evidenceReadings, loadSampleEvidence, runDispositions, lockRunRow } from './evidence.data';

export class EvidenceService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
    private readonly now: () => Date,
  ) {}

  sample(sampleId: string): Promise<SampleEvidence> {
    return loadSampleEvidence(this.ds.manager, sampleId);
  }

  async runCoverage(runId: string): Promise<RunCoverage> {
    const m = this.ds.manager;
    const run = await m.findOneBy(RunEntity, { id: runId });
    if (!run) throw notFound('The run');
    const plan = await m.findOneByOrFail(StressPlanEntity, { id: run.planId });
    const dispositions = await runDispositions(m, [run.id]);
    const devices = await evidenceDevices(m, [run], dispositions);
    const readings = await evidenceReadings(m, [run.id]);
    const rps = [...plan.readPointsH].sort((a, b) => a - b);
    return {
      runId: run.id,
      runCode: run.code,
      sampleId: run.sampleId,
      readPoints: coverageOf([run], rps, devices, readings, dispositions),
      dispositions,
    };
  }

  async addDisposition(actor: SessionUser, runId: string, input: DispositionInput): Promise<Disposition> {
    const id = await this.ds.transaction(async (m) => {
      const b = await loadRunBundle(m, runId);
      const rps = [...b.plan.readPointsH].sort((a, c) => a - c);
      if (!rps.includes(input.readPointH)) {
        throw unprocessable(`Read point ${input.readPointH} h is not in plan "${b.plan.name}" (read points ${rps.join(' / ')} h).`);
      }
      if (!b.devices.length) throw unprocessable(`Run ${b.run.code} has no socket map yet, so no device can be matched.`);
      let candidates = b.devices.filter((d) => d.serial.toLowerCase() === input.serial.toLowerCase());
      if (input.lot) candidates = candidates.filter((d) => d.lotCode.toLowerCase() === input.lot!.toLowerCase());
      if (!candidates.length) throw unprocessable(`Serial ${input.serial} is not loaded in run ${b.run.code}.`);
      if (candidates.length > 1)
        throw unprocessable(`Serial ${input.serial} matches devices of several lots in run ${b.run.code}; name the lot.`);
      const device = candidates[0];
      if (TRIP_DISPOSITIONS.includes(input.kind) && !device.tripped) {
        throw unprocessable(
          `Device ${device.serial} (socket ${device.socketIndex}) did not trip; "${DISPOSITION_LABEL[input.kind]}" is only for a tripped device.`,
        );
      }
      await lockRunRow(m, runId);
      const existing = await m.findOneBy(DeviceDispositionEntity, { runId, deviceId: device.deviceId });
      if (existing) {
        throw conflict(
          `Device ${device.serial} already has a disposition in run ${b.run.code}: ${DISPOSITION_LABEL[existing.kind]} from ${existing.readPointH} h (${existing.byName}, ${existing.at.toISOString().slice(0, 16).replace('T', ' ')} UTC).`,
        );
      }
      const at = this.now();
      const saved = await m.save(
        m.create(DeviceDispositionEntity, {
          runId,
          deviceId: device.deviceId,
          readPointH: input.readPointH,
          kind: input.kind,
          reason: input.reason,
          byId: actor.id,
          byName: actor.name,
          at,
        }),
      );
      await this.audit.record(
        {
          actor,
          action: 'device.disposition',
          entity: 'run',
          entityId: runId,
          reason: input.reason,
          details: {
            dispositionId: saved.id,
            serial: device.serial,
            lot: device.lotCode,
            socket: device.socketIndex,
            kind: input.kind,
            readPointH: input.readPointH,
          },
        },
        m,
      );
      if (input.kind === 'trip-failure') await refreshFirstFailures(m, await loadRunBundle(m, runId));
      return saved.id;
    });
    const all = await runDispositions(this.ds.manager, [runId]);
    return all.find((x) => x.id === id)!;
  }

  async withdrawDisposition(actor: SessionUser, id: string, input: WithdrawDispositionInput): Promise<RunCoverage> {
    const runId = await this.ds.transaction(async (m) => {
      const x = await m.findOne(DeviceDispositionEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
      if (!x) throw notFound('The disposition');
      await m.delete(DeviceDispositionEntity, { id });
      await this.audit.record(
        {
          actor,
          action: 'device.disposition-withdrawn',
          entity: 'run',
          entityId: x.runId,
          reason: input.reason,
          details: {
            dispositionId: x.id,
            deviceId: x.deviceId,
            kind: x.kind,
            readPointH: x.readPointH,
            recordedReason: x.reason,
            recordedBy: x.byName,
            recordedAt: x.at.toISOString(),
          },
        },
        m,
      );
      if (x.kind === 'trip-failure') await refreshFirstFailures(m, await loadRunBundle(m, x.runId));
      return x.runId;
    });
    return this.runCoverage(runId);
  }

  async confirmReading(actor: SessionUser, measurementId: string, input: ConfirmReadingInput): Promise<EvidenceReading> {
    await this.ds.transaction(async (m) => {
      const x = await m.findOne(MeasurementEntity, { where: { id: measurementId }, lock: { mode: 'pessimistic_write' } });
      if (!x) throw notFound('The reading');
      if (!x.conditionsFlag)
        throw unprocessable('This reading is not flagged; its conditions agree with time zero, so there is nothing to confirm.');
      if (x.confirmedAt)
        throw conflict(`This reading was confirmed already on ${x.confirmedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC.`);
      const at = this.now();
      await m.update(MeasurementEntity, { id: x.id }, { confirmedAt: at, confirmedById: actor.id, confirmReason: input.reason });
      await this.audit.record(
        {
          actor,
          action: 'measurement.confirm',
          entity: 'run',
          entityId: x.runId,
          reason: input.reason,
          details: { measurementId: x.id, deviceId: x.deviceId, readPointH: x.readPointH, flag: x.conditionsFlag },
        },
        m,
      );
      await refreshFirstFailures(m, await loadRunBundle(m, x.runId));
    });
    const x = await this.ds.manager.findOneByOrFail(MeasurementEntity, { id: measurementId });
    return (await evidenceReadings(this.ds.manager, [x.runId])).find((r) => r.id === measurementId)!;
  }
}
