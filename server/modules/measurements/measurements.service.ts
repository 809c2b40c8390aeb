import { createHash } from 'node:crypto';
import { isLateReading } from '../../../shared/domain/standards';
import { formatUtc } from '../../../shared/domain/format';
import { Not, type DataSource, type EntityManager } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import {
  type ManualReading,
  type MeasurementRunDetail,
  type MeasurementRunSummary,
  type RowResult,
  type RunDriftResult,
  type StoredReading,
  type UploadFields,
  type UploadResult,
} from '../../../shared/schemas/measurements';
import { conditionDifferences, isCatastrophic, isJudgeable, type MeasuringConditions } from '../../../shared/evidence';
import { DeviceDispositionEntity, MeasurementEntity, MeasurementUploadEntity, RunEntity, RunSocketEntity } from '../../db/entities';
import { conflict, unprocessable } from '../../http/errors';
import type { AuditService } from '../audit/audit.service';
import { parseMeasurementCsv, type ParsedRow, type ParsedValues } from './csv-rows';
import { driftOfDevice, GAIN_LAW, GAIN_LAW_SOURCE, type ReadingInput } from './device-drift';
import { loadRunBundle, type RunBundle, type RunDeviceRow } from './run-data';
import { lotCodesOfSerials, readPointCounts, upsertMeasurements } from './measurements.data';

/** The rule for files sent more than once, shown with every upload answer. */
export const REUPLOAD_RULE =
  'The same file (same bytes) sent again for this run stores nothing. A corrected file replaces, device by device, ' +
  'the reading already stored for this run and read point; devices not in the file keep their readings.';

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
      units: p.fields.units,
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
    if (previous) body.notes.unshift('This exact file was already stored for this run; storing it again changes nothing.');
    if (p.preview) return { status: 200, body };
    if (body.stored + body.unchanged === 0) {
      throw unprocessable(`No row of ${fileName} can be stored; every row has a problem (see rows). Nothing was stored.`, {
        rows: body.rows,
        columns: body.columns,
      });
    }

    try {
      body.uploadId = await this.storeUpload(actor, p, b, checked, body);
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
    p: { runId: string; hours: number },
    b: RunBundle,
    checked: CheckedRow[],
    body: UploadResult,
  ): Promise<string> {
    const { fileName, fileSha256: sha } = body;
    return this.ds.transaction(async (m) => {
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
      await this.write(m, b, p.hours, checked, { uploadId: up.id, enteredById: actor.id });
      await this.audit.record(
        {
          actor,
          action: 'measurement.upload',
          entity: 'run',
          entityId: p.runId,
          details: {
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

  async manual(actor: SessionUser, runId: string, hours: number, items: ManualReading[]): Promise<UploadResult> {
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
      notes: ['Manual entry stores all devices or none. A device already measured at this read point gets the new reading.'],
    };
    if (body.rejected) {
      throw unprocessable(`${body.rejected} of ${body.rowsTotal} entries have a problem (see rows). Nothing was stored.`, {
        rows: body.rows,
      });
    }
    await this.ds.transaction(async (m) => {
      await this.write(m, b, hours, checked, { uploadId: null, enteredById: actor.id });
      await this.audit.record(
        {
          actor,
          action: 'measurement.manual',
          entity: 'run',
          entityId: runId,
          details: { readPointH: hours, serials: items.map((i) => i.serial), inserted: body.inserted, replaced: body.replaced },
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
      const reasons = [...r.reasons];
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
  ) {
    const good = rows.filter((r) => r.outcome === 'insert' || r.outcome === 'replace');
    if (good.length) {
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
        })),
      );
    }
    await refreshConditionFlags(m, b.run.id);
    await refreshFirstFailures(m, b);
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

/**
 * What runDrift reads of a run: a RunBundle has it all; analytics passes rows read with raw SQL
 * (no entity hydration) for whole part numbers at a time.
 */
export interface DriftSource {
  run: Pick<RunBundle['run'], 'id' | 'code'>;
  plan: Pick<RunBundle['plan'], 'criteria' | 'readPointsH'>;
  deviceType: Pick<RunBundle['deviceType'], 'betaRefTC' | 'xtb'>;
  devices: Array<Pick<RunDeviceRow, 'deviceId' | 'serial' | 'lotId' | 'lotCode' | 'socketIndex'>>;
}

/** One stored reading as drift needs it (a MeasurementEntity is one). */
export type DriftReading = ReadingInput & { deviceId: string };

export function runDrift(b: DriftSource, ms: readonly DriftReading[], opts: { reasons?: boolean } = {}): RunDriftResult {
  // Push into one list per device: copying the list per reading made a run's grouping quadratic.
  const byDevice = new Map<string, DriftReading[]>();
  for (const x of ms) {
    const list = byDevice.get(x.deviceId);
    if (list) list.push(x);
    else byDevice.set(x.deviceId, [x]);
  }
  const gain = { referenceC: b.deviceType.betaRefTC, xtb: b.deviceType.xtb };
  const criteria = b.plan.criteria;
  return {
    runId: b.run.id,
    runCode: b.run.code,
    criteria,
    readPointsH: [...b.plan.readPointsH].sort((x, y) => x - y),
    gainReference: { ...gain, law: GAIN_LAW, source: GAIN_LAW_SOURCE },
    devices: b.devices.map((d) => ({
      deviceId: d.deviceId,
      serial: d.serial,
      lotId: d.lotId,
      lotCode: d.lotCode,
      socketIndex: d.socketIndex,
      ...driftOfDevice(byDevice.get(d.deviceId) ?? [], criteria, gain, opts.reasons !== false),
    })),
  };
}

/** A reading's conditions against its device's time zero, as one text (null when they agree). */
export function conditionFlagText(t0: MeasuringConditions, r: MeasuringConditions): string | null {
  const diffs = conditionDifferences(t0, r);
  return diffs.length ? diffs.join(' ') : null;
}

/**
 * Every later reading of the run compared with its device's time zero (which may itself have been
 * corrected): a changed flag is stored and any earlier confirmation of it is withdrawn.
 */
export async function refreshConditionFlags(m: EntityManager, runId: string) {
  const ms = await m.find(MeasurementEntity, { where: { runId } });
  const t0 = new Map(ms.filter((x) => x.readPointH === 0 && x.result === 'measured').map((x) => [x.deviceId, x]));
  for (const x of ms) {
    if (x.readPointH === 0) continue;
    const zero = t0.get(x.deviceId);
    const flag = zero && x.result === 'measured' ? conditionFlagText(zero, x) : null;
    if (flag !== x.conditionsFlag) {
      await m.update(
        MeasurementEntity,
        { id: x.id },
        { conditionsFlag: flag, confirmedAt: null, confirmedById: null, confirmReason: null },
      );
    }
  }
}

/**
 * run_sockets.failed_at_h mirrors the judgement so the floor and scheduler can see it: the first
 * read point failing the plan's deltas, with a catastrophic result (open, short, no reading), or a
 * trip recorded as a failure — whichever comes first.
 */
export async function refreshFirstFailures(m: EntityManager, b: RunBundle) {
  const ms = await m.find(MeasurementEntity, { where: { runId: b.run.id } });
  const drift = runDrift(b, ms.filter(isJudgeable));
  const trips = await m.find(DeviceDispositionEntity, { where: { runId: b.run.id, kind: 'trip-failure' } });
  const earliest = (a: number | null, c: number | null) => (a === null ? c : c === null ? a : Math.min(a, c));
  for (const d of drift.devices) {
    let first = d.firstFailedH;
    for (const x of ms) if (x.deviceId === d.deviceId && isCatastrophic(x.result)) first = earliest(first, x.readPointH);
    for (const t of trips) if (t.deviceId === d.deviceId) first = earliest(first, t.readPointH);
    const current = b.devices.find((x) => x.deviceId === d.deviceId)?.failedAtH ?? null;
    if (current !== first) {
      await m.update(RunSocketEntity, { runId: b.run.id, deviceId: d.deviceId }, { failedAtH: first });
    }
  }
}
