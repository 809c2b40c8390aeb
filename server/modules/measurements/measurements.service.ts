import { createHash } from 'node:crypto';
import { isLateReading } from '../../../shared/domain/standards';
import { formatUtc } from '../../../shared/domain/format';
import { ratingProblems } from '../../../shared/domain/reading-plausibility';
import { checkSummary } from '../../../shared/domain/upload-summary';
import { Not, type DataSource, type EntityManager } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import {
  type CorrectionInput,
  type DeviceHistory,
  type ManualReading,
  type MeasurementRunDetail,
  type MeasurementRunSummary,
  type RowResult,
  type RunDriftResult,
  type StoredReading,
  type UploadFields,
  type UploadRecord,
  type UploadResult,
} from '../../../shared/schemas/measurements';
import { MeasurementEntity, MeasurementUploadEntity, RunEntity } from '../../db/entities';
import { conflict, notFound, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { parseMeasurementCsv, type ParsedRow, type ParsedValues } from './csv-rows';
import { conditionFlagText, refreshConditionFlags, refreshFirstFailures, runDrift } from './judgement';
import { loadRunBundle, type RunBundle, type RunDeviceRow } from './run-data';
import {
  deviceVersions,
  keepFile,
  lotCodesOfSerials,
  readPointCounts,
  runUploads,
  uploadWithFile,
  upsertMeasurements,
} from './measurements.data';
import { deviationKinds, gateRows, type RowRecord } from './record-gate';

export { conditionFlagText, refreshConditionFlags, refreshFirstFailures, runDrift, type DriftReading, type DriftSource } from './judgement';

/** The rule for files sent more than once, shown with every upload answer. */
export const REUPLOAD_RULE =
  'The same file (same bytes) sent again for this run stores nothing. A corrected file, sent with a reason, adds a new ' +
  'version of each changed reading (the earlier one stays in the device history); devices not in the file keep their readings.';

const SAME_TOLERANCE = 1e-12;
const sameValues = (m: MeasurementEntity, v: ParsedValues) =>
  (
    [
      [m.hfe, v.hfe],
      [m.hfeIcA, v.hfeIcA],
      [m.hfeVceV, v.hfeVceV],
      [m.icboA, v.icboA],
      [m.icboVcbV, v.icboVcbV],
      [m.vcesatV, v.vcesatV],
      [m.bvceoV, v.bvceoV],
      [m.measuredC, v.measuredC],
    ] as Array<[number | null, number | null]>
  ).every(([a, b]) => (a === null || b === null ? a === b : Math.abs(a - b) <= SAME_TOLERANCE * Math.max(1, Math.abs(a)))) &&
  m.result === v.result &&
  m.measuredAt.getTime() === v.measuredAt.getTime();

interface CheckedRow extends ParsedRow {
  deviceId: string | null;
  late: boolean;
  conditionsFlag: string | null;
  outcome: RowResult['outcome'];
}

/** The answer to a file stored before for this read point: nothing is stored again. */
function alreadyStored(
  previous: MeasurementUploadEntity,
  base: Pick<UploadResult, 'runId' | 'readPointH' | 'fileName' | 'fileSha256'>,
  previousUpload: UploadResult['previousUpload'],
): UploadResult {
  const rows: RowResult[] = previous.rowErrors ?? [];
  return {
    ...base,
    status: 'already-stored',
    uploadId: previous.id,
    rowsTotal: previous.rowsTotal,
    stored: 0,
    inserted: 0,
    replaced: 0,
    unchanged: previous.rowsStored,
    rejected: previous.rowsRejected,
    late: 0,
    columns: {},
    rows,
    previousUpload,
    notes: [
      `This exact file was already stored on ${formatUtc(previous.createdAt)} (${previous.rowsStored} rows stored, ${previous.rowsRejected} refused); nothing was stored again.`,
      REUPLOAD_RULE,
    ],
  };
}

export class MeasurementsService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
    private readonly now: () => Date,
  ) {}

  // -------------------------------------------------------------------------------------------
  // Runs (read side, for the readings screen)
  // -------------------------------------------------------------------------------------------

  async listRuns(): Promise<MeasurementRunSummary[]> {
    const runs = await this.ds.getRepository(RunEntity).find({ where: { state: Not('aborted') }, order: { createdAt: 'DESC' }, take: 200 });
    const out: MeasurementRunSummary[] = [];
    for (const r of runs) out.push(await this.summary(this.ds.manager, await loadRunBundle(this.ds.manager, r.id)));
    return out;
  }

  async runDetail(runId: string): Promise<MeasurementRunDetail> {
    const b = await loadRunBundle(this.ds.manager, runId);
    return { ...(await this.summary(this.ds.manager, b)), devices: b.devices };
  }

  private async summary(m: EntityManager, b: RunBundle): Promise<MeasurementRunSummary> {
    const counts = await readPointCounts(m, b.run.id);
    const byH = new Map(counts.map((c) => [Number(c.h), c]));
    return {
      id: b.run.id,
      code: b.run.code,
      state: b.run.state,
      planId: b.plan.id,
      planName: b.plan.name,
      planKind: b.plan.kind,
      deviceTypeId: b.deviceType.id,
      partNumber: b.deviceType.partNumber,
      rigCode: b.rig?.code ?? null,
      stressHours: b.run.stressHours,
      durationH: b.plan.durationH,
      biasRemovedAt: b.run.biasRemovedAt?.toISOString() ?? null,
      startedAt: b.run.startedAt?.toISOString() ?? null,
      lots: b.lots.map((l) => ({ id: l.id, code: l.code })),
      deviceCount: b.devices.length,
      readPoints: [...b.plan.readPointsH]
        .sort((x, y) => x - y)
        .map((h) => ({ hours: h, measured: byH.get(h)?.n ?? 0, late: byH.get(h)?.late ?? 0, reached: this.reached(b.run, h) })),
    };
  }

  private reached(run: RunEntity, h: number) {
    return h === 0 || run.stressHours >= h - 0.5;
  }

  async readings(runId: string, hours: number): Promise<StoredReading[]> {
    const b = await loadRunBundle(this.ds.manager, runId);
    const devices = new Map(b.devices.map((d) => [d.deviceId, d]));
    const rows = await this.ds.getRepository(MeasurementEntity).find({ where: { runId, readPointH: hours } });
    return rows
      .map((r) => ({
        id: r.id,
        deviceId: r.deviceId,
        serial: devices.get(r.deviceId)?.serial ?? '?',
        lotCode: devices.get(r.deviceId)?.lotCode ?? '?',
        readPointH: r.readPointH,
        hfe: r.hfe,
        hfeIcA: r.hfeIcA,
        hfeVceV: r.hfeVceV,
        icboA: r.icboA,
        icboVcbV: r.icboVcbV,
        vcesatV: r.vcesatV,
        bvceoV: r.bvceoV,
        measuredC: r.measuredC,
        measuredAt: r.measuredAt.toISOString(),
        late: r.late,
        uploadId: r.uploadId,
        manual: r.uploadId === null,
        result: r.result,
        conditionsFlag: r.conditionsFlag,
        confirmedAt: r.confirmedAt?.toISOString() ?? null,
        version: r.version,
        changeReason: r.changeReason,
        deviation: deviationKinds(r.deviation),
      }))
      .sort((a, b2) => (devices.get(a.deviceId)?.socketIndex ?? 0) - (devices.get(b2.deviceId)?.socketIndex ?? 0));
  }

  // -------------------------------------------------------------------------------------------
  // Upload
  // -------------------------------------------------------------------------------------------

  private checkReadPoint(b: RunBundle, hours: number) {
    const planned = [...b.plan.readPointsH].sort((x, y) => x - y);
    if (!planned.includes(hours)) {
      throw unprocessable(`Read point ${hours} h is not in plan "${b.plan.name}" (read points ${planned.join(' / ')} h).`);
    }
    if (b.run.state === 'booked' && hours > 0)
      throw unprocessable(`Run ${b.run.code} has not started; only time-zero (0 h) readings can be stored.`);
    if (b.run.state === 'aborted') throw unprocessable(`Run ${b.run.code} was aborted; its readings can no longer change.`);
    if (!this.reached(b.run, hours)) {
      throw unprocessable(
        `Run ${b.run.code} has accrued ${+b.run.stressHours.toFixed(1)} stress hours; the ${hours} h read point is not reached yet.`,
      );
    }
    if (!b.devices.length) throw unprocessable(`Run ${b.run.code} has no socket map yet, so no device can be matched.`);
  }

  async upload(
    actor: SessionUser,
    p: { runId: string; hours: number; preview: boolean; file: { buffer: Buffer; originalname: string }; fields: UploadFields },
  ): Promise<{ status: number; body: UploadResult }> {
    // The file is kept (measurement_files) only with an upload that stored something.
    const b = await loadRunBundle(this.ds.manager, p.runId);
    this.checkReadPoint(b, p.hours);
    const sha = createHash('sha256').update(p.file.buffer).digest('hex');
    const fileName = (p.file.originalname || 'upload.csv').slice(0, 200);
    const previous = await this.ds.getRepository(MeasurementUploadEntity).findOne({ where: { runId: p.runId, fileSha256: sha } });
    const previousUpload = previous
      ? {
          id: previous.id,
          readPointH: previous.readPointH,
          createdAt: previous.createdAt.toISOString(),
          rowsStored: previous.rowsStored,
          rowsRejected: previous.rowsRejected,
        }
      : undefined;
    if (previous && previous.readPointH !== p.hours) {
      throw conflict(
        `This exact file was already stored for read point ${previous.readPointH} h of run ${b.run.code} on ${formatUtc(previous.createdAt)}; it cannot also be the ${p.hours} h reading.`,
        { previousUpload },
      );
    }
    const base = { runId: p.runId, readPointH: p.hours, fileName, fileSha256: sha, notes: [REUPLOAD_RULE] };
    if (previous && !p.preview) return { status: 200, body: alreadyStored(previous, base, previousUpload) };

    const parsed = parseMeasurementCsv(p.file.buffer, {
      mapping: p.fields.mapping,
      defaultTempC: p.fields.defaultTempC,
      now: this.now(),
    });
    const checked = await this.checkRows(this.ds.manager, b, p.hours, parsed.rows, 'row');
    const result = this.summarise(checked);
    const body: UploadResult = {
      ...base,
      status: p.preview ? 'preview' : 'stored',
      uploadId: null,
      columns: parsed.columns,
      rowsTotal: checked.length,
      ...result,
      ...(previousUpload ? { previousUpload } : {}),
    };
    if (previous) {
      // One message from the counts: identical → nothing to store; otherwise what differs, and that the same file is stored once.
      const summary = checkSummary(body, formatUtc(previous.createdAt));
      body.notes = [summary.text, REUPLOAD_RULE];
      body.stored = summary.storable;
    }
    if (p.preview) return { status: 200, body };
    if (body.stored + body.unchanged === 0) {
      throw unprocessable(`No row of ${fileName} can be stored; every row has a problem (see rows). Nothing was stored.`, {
        rows: body.rows,
        columns: body.columns,
      });
    }

    const records = await gateRows(this.ds.manager, b, p.hours, checked, actor, () => p.fields.reason);
    try {
      body.uploadId = await this.storeUpload(actor, p, b, checked, body, records);
      return { status: 201, body };
    } catch (e) {
      // Two identical uploads at once: the unique index lets one through; the other is "already stored".
      if ((e as { code?: string }).code === '23505') {
        return this.upload(actor, p);
      }
      throw e;
    }
  }

  /** One transaction: the upload row, its readings and the audit entry; gives the upload's id. */
  private async storeUpload(
    actor: SessionUser,
    p: { runId: string; hours: number; file: { buffer: Buffer }; fields: UploadFields },
    b: RunBundle,
    checked: CheckedRow[],
    body: UploadResult,
    records: Map<number, RowRecord>,
  ): Promise<string> {
    const { fileName, fileSha256: sha } = body;
    return this.ds.transaction(async (m) => {
      await keepFile(m, sha, p.file.buffer);
      const up = await m.save(
        m.create(MeasurementUploadEntity, {
          runId: p.runId,
          readPointH: p.hours,
          fileSha256: sha,
          fileName,
          rowsTotal: body.rowsTotal,
          rowsStored: body.stored + body.unchanged,
          rowsRejected: body.rejected,
          rowErrors: body.rows.filter((r) => r.outcome === 'rejected'),
          uploadedById: actor.id,
        }),
      );
      await this.write(m, b, p.hours, checked, { uploadId: up.id, enteredById: actor.id }, records);
      await this.audit.record(
        {
          actor,
          action: 'measurement.upload',
          entity: 'run',
          entityId: p.runId,
          reason: p.fields.reason ?? undefined,
          details: {
            deviations: deviationSummary(checked, records),
            readPointH: p.hours,
            fileName,
            fileSha256: sha,
            inserted: body.inserted,
            replaced: body.replaced,
            rejected: body.rejected,
            late: body.late,
          },
        },
        m,
      );
      return up.id;
    });
  }

  async manual(
    actor: SessionUser,
    runId: string,
    hours: number,
    items: Array<ManualReading | (Omit<ManualReading, 'reason'> & { reason: string })>,
    opts: { correction?: boolean } = {},
  ): Promise<UploadResult> {
    const b = await loadRunBundle(this.ds.manager, runId);
    this.checkReadPoint(b, hours);
    const now = this.now();
    const parsed: ParsedRow[] = items.map((it, i) => {
      const reasons: string[] = [];
      let measuredAt = now;
      if (it.measuredAt) {
        measuredAt = new Date(it.measuredAt);
        if (measuredAt.getTime() > now.getTime() + 10 * 60_000) reasons.push(`measuredAt ${measuredAt.toISOString()} lies in the future.`);
      }
      return {
        row: i + 1,
        serial: it.serial,
        lot: it.lot ?? null,
        reasons,
        values: reasons.length
          ? null
          : it.result !== 'measured'
            ? {
                result: it.result,
                hfe: null,
                hfeIcA: null,
                hfeVceV: null,
                icboA: null,
                icboVcbV: null,
                vcesatV: null,
                bvceoV: null,
                measuredC: it.measuredC,
                measuredAt,
              }
            : {
                result: it.result,
                hfe: it.hfe ?? null,
                hfeIcA: it.hfeIcA ?? null,
                hfeVceV: it.hfeVceV ?? null,
                icboA: it.icboA ?? null,
                icboVcbV: it.icboVcbV ?? null,
                vcesatV: it.vcesatV ?? null,
                bvceoV: it.bvceoV ?? null,
                measuredC: it.measuredC,
                measuredAt,
              },
      };
    });
    const checked = await this.checkRows(this.ds.manager, b, hours, parsed, 'entry');
    const result = this.summarise(checked);
    const body: UploadResult = {
      status: 'stored',
      runId,
      readPointH: hours,
      fileName: '(manual entry)',
      fileSha256: '',
      uploadId: null,
      columns: {},
      rowsTotal: checked.length,
      ...result,
      notes: [
        'Manual entry stores all devices or none. A device already measured at this read point gets a new version of its reading (with the reason given); the earlier one stays in its history.',
      ],
    };
    if (body.rejected) {
      throw unprocessable(`${body.rejected} of ${body.rowsTotal} entries have a problem (see rows). Nothing was stored.`, {
        rows: body.rows,
      });
    }
    if (opts.correction && body.replaced === 0) {
      throw unprocessable(`The values given equal the stored reading of ${items[0].serial} at ${hours} h; nothing was corrected.`);
    }
    const records = await gateRows(this.ds.manager, b, hours, checked, actor, (row) => items[row.row - 1]?.reason);
    await this.ds.transaction(async (m) => {
      await this.write(m, b, hours, checked, { uploadId: null, enteredById: actor.id }, records);
      await this.audit.record(
        {
          actor,
          action: opts.correction ? 'measurement.correct' : 'measurement.manual',
          entity: 'run',
          entityId: runId,
          details: {
            readPointH: hours,
            serials: items.map((i) => i.serial),
            inserted: body.inserted,
            replaced: body.replaced,
            corrections: checked
              .filter((c) => records.get(c.row)?.reason)
              .map((c) => ({ serial: c.serial, reason: records.get(c.row)!.reason })),
            deviations: deviationSummary(checked, records),
          },
        },
        m,
      );
    });
    return body;
  }

  /** Device matching, duplicates, late flag and the outcome each good row would have. */
  private async checkRows(m: EntityManager, b: RunBundle, hours: number, rows: ParsedRow[], noun: 'row' | 'entry'): Promise<CheckedRow[]> {
    const bySerial = new Map<string, RunDeviceRow[]>();
    for (const d of b.devices) bySerial.set(d.serial.toLowerCase(), [...(bySerial.get(d.serial.toLowerCase()) ?? []), d]);
    const unknownSerials = [...new Set(rows.map((r) => r.serial).filter((s): s is string => !!s && !bySerial.has(s.toLowerCase())))];
    const elsewhere = new Map<string, string>();
    if (unknownSerials.length) {
      const found = await lotCodesOfSerials(
        m,
        unknownSerials.map((s) => s.toLowerCase()),
      );
      for (const f of found) elsewhere.set(f.serial.toLowerCase(), f.code);
    }
    const existing = new Map(
      (await m.find(MeasurementEntity, { where: { runId: b.run.id, readPointH: hours } })).map((x) => [x.deviceId, x]),
    );
    const timeZero = new Map(
      (await m.find(MeasurementEntity, { where: { runId: b.run.id, readPointH: 0, result: 'measured' } })).map((x) => [x.deviceId, x]),
    );

    const checked: CheckedRow[] = rows.map((r) => {
      const reasons = [...r.reasons, ...(r.values ? ratingProblems(r.values, b.deviceType) : [])];
      let deviceId: string | null = null;
      if (r.serial) {
        let candidates = bySerial.get(r.serial.toLowerCase()) ?? [];
        if (r.lot) candidates = candidates.filter((d) => d.lotCode.toLowerCase() === r.lot!.toLowerCase());
        if (candidates.length === 1) deviceId = candidates[0].deviceId;
        else if (candidates.length > 1) reasons.push(`Serial ${r.serial} matches devices of several lots in this run; add a lot column.`);
        else if (bySerial.has(r.serial.toLowerCase())) reasons.push(`Serial ${r.serial} is not in lot ${r.lot} on this run.`);
        else if (elsewhere.has(r.serial.toLowerCase())) {
          reasons.push(`Serial ${r.serial} (lot ${elsewhere.get(r.serial.toLowerCase())}) is not in run ${b.run.code}.`);
        } else reasons.push(`Unknown serial ${r.serial}: no device with this serial is registered.`);
      }
      const late =
        hours > 0 && !!b.run.biasRemovedAt && !!r.values && isLateReading(b.run.biasRemovedAt.getTime(), r.values.measuredAt.getTime());
      const t0 = deviceId && hours > 0 ? timeZero.get(deviceId) : undefined;
      const conditionsFlag = t0 && r.values && r.values.result === 'measured' ? conditionFlagText(t0, r.values) : null;
      return { ...r, reasons, deviceId, late, conditionsFlag, outcome: 'rejected' as const };
    });

    // The same device twice: we cannot tell which reading is right, so neither is stored.
    const seen = new Map<string, CheckedRow[]>();
    for (const c of checked) if (c.deviceId) seen.set(c.deviceId, [...(seen.get(c.deviceId) ?? []), c]);
    for (const group of seen.values()) {
      if (group.length < 2) continue;
      const where = group.map((g) => g.row).join(', ');
      for (const g of group) g.reasons.push(`Duplicate in file: serial ${g.serial} appears in ${noun}s ${where}; none of them is stored.`);
    }

    for (const c of checked) {
      if (c.reasons.length || !c.values || !c.deviceId) c.outcome = 'rejected';
      else {
        const old = existing.get(c.deviceId);
        c.outcome = !old ? 'insert' : sameValues(old, c.values) ? 'unchanged' : 'replace';
      }
    }
    return checked;
  }

  private summarise(checked: CheckedRow[]) {
    const rows: RowResult[] = checked.map((c) => ({
      row: c.row,
      serial: c.serial,
      outcome: c.outcome,
      reasons: c.reasons,
      late: c.outcome !== 'rejected' && c.late,
      ...(c.outcome !== 'rejected' && c.conditionsFlag ? { conditionsFlag: c.conditionsFlag } : {}),
      ...(c.values && c.outcome !== 'rejected' ? { values: { ...c.values, measuredAt: c.values.measuredAt.toISOString() } } : {}),
    }));
    const count = (o: RowResult['outcome']) => rows.filter((r) => r.outcome === o).length;
    return {
      rows,
      inserted: count('insert'),
      replaced: count('replace'),
      unchanged: count('unchanged'),
      rejected: count('rejected'),
      stored: count('insert') + count('replace'),
      late: rows.filter((r) => r.late).length,
    };
  }

  /** Upsert per (run, device, read point), then refresh each device's first-failed read point. */
  private async write(
    m: EntityManager,
    b: RunBundle,
    hours: number,
    rows: CheckedRow[],
    src: { uploadId: string | null; enteredById: string },
    records: Map<number, RowRecord>,
  ) {
    const good = rows.filter((r) => r.outcome === 'insert' || r.outcome === 'replace');
    if (good.length) {
      // A new version is a new reading: its measuring conditions are judged again, so an earlier
      // confirmation of a flag does not carry over (confirmed_* are in the upsert's update list).
      await upsertMeasurements(
        m,
        good.map((r) => ({
          runId: b.run.id,
          deviceId: r.deviceId!,
          readPointH: hours,
          ...r.values!,
          late: r.late,
          uploadId: src.uploadId,
          enteredById: src.enteredById,
          conditionsFlag: r.conditionsFlag,
          changeReason: records.get(r.row)?.reason ?? null,
          deviation: records.get(r.row)?.deviations.join(',') || null,
          confirmedAt: null,
          confirmedById: null,
          confirmReason: null,
        })),
      );
    }
    await refreshConditionFlags(m, b.run.id);
    await refreshFirstFailures(m, b);
  }

  // -------------------------------------------------------------------------------------------
  // Corrections, history, kept files
  // -------------------------------------------------------------------------------------------

  /**
   * A correction of one stored reading: a new version with its reason (the earlier one stays in
   * measurement_versions). The same rules as manual entry apply (shared/domain/records.ts).
   */
  async correct(actor: SessionUser, measurementId: string, input: CorrectionInput): Promise<StoredReading> {
    const x = await this.ds.getRepository(MeasurementEntity).findOneBy({ id: measurementId });
    if (!x) throw notFound('The reading');
    const b = await loadRunBundle(this.ds.manager, x.runId);
    const device = b.devices.find((d) => d.deviceId === x.deviceId);
    if (!device) throw unprocessable("This reading belongs to a device that is no longer in the run's socket map.");
    // A correction keeps the time of measuring unless a new one is given (a value fixed, not re-measured).
    const { reason, ...values } = input;
    const measuredAt = values.measuredAt ?? x.measuredAt.toISOString();
    const item = { serial: device.serial, lot: device.lotCode, ...values, measuredAt, reason };
    await this.manual(actor, x.runId, x.readPointH, [item], {
      correction: true,
    });
    const now = (await this.readings(x.runId, x.readPointH)).find((r) => r.deviceId === x.deviceId);
    return now!;
  }

  /** Every version of a device's readings in a run (GET …/runs/:runId/devices/:deviceId/history). */
  async history(runId: string, deviceId: string): Promise<DeviceHistory> {
    const b = await loadRunBundle(this.ds.manager, runId);
    const device = b.devices.find((d) => d.deviceId === deviceId);
    if (!device) throw notFound('The device on this run');
    const rows = await deviceVersions(this.ds.manager, runId, deviceId);
    return {
      runId,
      runCode: b.run.code,
      deviceId,
      serial: device.serial,
      lotCode: device.lotCode,
      versions: rows.map((v) => ({
        measurementId: v.measurementId,
        readPointH: v.readPointH,
        version: v.version,
        current: v.version === v.currentVersion,
        result: v.result,
        hfe: v.hfe,
        hfeIcA: v.hfeIcA,
        hfeVceV: v.hfeVceV,
        icboA: v.icboA,
        icboVcbV: v.icboVcbV,
        vcesatV: v.vcesatV,
        bvceoV: v.bvceoV,
        measuredC: v.measuredC,
        measuredAt: v.measuredAt.toISOString(),
        late: v.late,
        uploadId: v.uploadId,
        fileName: v.fileName,
        enteredByName: v.enteredByName,
        reason: v.reason,
        deviation: deviationKinds(v.deviation),
        recordedAt: v.recordedAt.toISOString(),
      })),
    };
  }

  /** The run's uploads, each with the path of its kept file. */
  async uploads(runId: string): Promise<UploadRecord[]> {
    await loadRunBundle(this.ds.manager, runId);
    const rows = await runUploads(this.ds.manager, runId);
    return rows.map((r) => ({
      id: r.id,
      readPointH: Number(r.read_point_h),
      fileName: r.file_name,
      fileSha256: r.file_sha256,
      sizeBytes: r.size_bytes === null ? null : Number(r.size_bytes),
      rowsTotal: Number(r.rows_total),
      rowsStored: Number(r.rows_stored),
      rowsRejected: Number(r.rows_rejected),
      uploadedByName: r.uploaded_by_name ?? null,
      createdAt: new Date(r.created_at).toISOString(),
      downloadPath: r.size_bytes === null ? null : `/api/measurements/uploads/${r.id}/file`,
    }));
  }

  /** The exact bytes of an upload's file, as stored. */
  async file(uploadId: string): Promise<{ fileName: string; fileSha256: string; content: Buffer }> {
    const up = await uploadWithFile(this.ds.manager, uploadId);
    if (!up) throw notFound('The upload');
    if (!up.content) {
      throw notFound(`The file of upload ${up.fileName} (stored before files were kept; only its SHA-256 ${up.fileSha256} is on record)`);
    }
    return { fileName: up.fileName, fileSha256: up.fileSha256, content: up.content };
  }

  // -------------------------------------------------------------------------------------------
  // Drift
  // -------------------------------------------------------------------------------------------

  async drift(runId: string): Promise<RunDriftResult> {
    const b = await loadRunBundle(this.ds.manager, runId);
    const ms = await this.ds.getRepository(MeasurementEntity).find({ where: { runId } });
    return runDrift(b, ms);
  }
}

/** The deviations a write recorded, for the audit entry. */
function deviationSummary(rows: Array<{ row: number; serial: string | null }>, records: Map<number, RowRecord>) {
  return rows
    .filter((r) => records.get(r.row)?.deviations.length)
    .map((r) => ({ serial: r.serial, kinds: records.get(r.row)!.deviations, reason: records.get(r.row)!.reason }));
}
