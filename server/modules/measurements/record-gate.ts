/**
 * The records gate (issue #21 item 1): before readings are written, which of them replace a stored
 * value, which are deviations on the lot (time zero after Start, a finished run changed, a failure
 * withdrawn — shared/domain/records.ts), and whether each has the reason and the person it needs.
 * The failure check runs the same judgement as refreshFirstFailures on the readings as they would
 * be after the write, so a failing device cannot be "un-failed" without an engineer's reason.
 */
import type { EntityManager } from 'typeorm';
import { can } from '../../../shared/domain/permissions';
import {
  CORRECTION_REASON_MIN,
  needsReason,
  RECORD_DEVIATION_LABEL,
  recordDeviations,
  timeZeroLocked,
  type RecordDeviationKind,
} from '../../../shared/domain/records';
import { formatUtc } from '../../../shared/domain/format';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { RowResult } from '../../../shared/schemas/measurements';
import { DeviceDispositionEntity, MeasurementEntity } from '../../db/entities';
import { forbidden, unprocessable } from '../../http/errors';
import type { ParsedRow, ParsedValues } from './csv-rows';
import type { ReadingVersionRow } from './measurements.data';
import type { LotReadingVersion } from '../../../shared/schemas/analytics';
import { firstFailureMap, withFlagsRefreshed, type Judged } from './judgement';
import type { RunBundle } from './run-data';

/** A checked row as the gate needs it. */
export interface GateRow extends ParsedRow {
  deviceId: string | null;
  conditionsFlag: string | null;
  outcome: RowResult['outcome'];
}

/** What a written row carries into its version: the reason and the deviations it records. */
export interface RowRecord {
  reason: string | null;
  deviations: RecordDeviationKind[];
}

/** The run's readings with the rows to be written in place (what the run would hold after the write). */
function afterWrite(ms: MeasurementEntity[], hours: number, rows: GateRow[]): Judged[] {
  const byKey = new Map<string, Judged>(ms.map((x) => [`${x.deviceId}:${x.readPointH}`, x]));
  for (const r of rows) {
    const v: ParsedValues = r.values!;
    byKey.set(`${r.deviceId}:${hours}`, {
      ...v,
      deviceId: r.deviceId!,
      readPointH: hours,
      late: false,
      conditionsFlag: r.conditionsFlag,
      confirmedAt: null,
    });
  }
  return withFlagsRefreshed([...byKey.values()]);
}

function deviationText(kind: RecordDeviationKind, b: RunBundle, serial: string, before: number | null): string {
  switch (kind) {
    case 'time-zero-after-start':
      return `Time zero of run ${b.run.code} is locked since stress started on ${formatUtc(b.run.startedAt!)}; a later time-zero entry needs an engineer's reason and is recorded as a deviation on the lot.`;
    case 'finished-run-changed':
      return `Run ${b.run.code} has finished; changing its readings needs an engineer's reason and is recorded as a deviation on the lot.`;
    case 'failure-withdrawn':
      return `Device ${serial} counts as failed from ${before} h; this change would withdraw that failure, which needs an engineer's reason and is recorded as a deviation on the lot.`;
  }
}

/**
 * Decides, for the rows about to be written, the reason and deviations of each (by row number), or
 * throws: 422 when a needed reason is missing, 403 when a deviation needs an engineer. Nothing has
 * been written when it throws.
 */
export async function gateRows(
  m: EntityManager,
  b: RunBundle,
  hours: number,
  checked: GateRow[],
  actor: SessionUser,
  reasonOf: (row: GateRow) => string | null | undefined,
): Promise<Map<number, RowRecord>> {
  const writing = checked.filter((c) => c.outcome === 'insert' || c.outcome === 'replace');
  const out = new Map<number, RowRecord>();
  if (!writing.length) return out;
  const ms = await m.find(MeasurementEntity, { where: { runId: b.run.id } });
  const trips = await m.find(DeviceDispositionEntity, { where: { runId: b.run.id, kind: 'trip-failure' } });
  const before = firstFailureMap(b, ms, trips);
  const after = firstFailureMap(b, afterWrite(ms, hours, writing), trips);
  const run = { state: b.run.state, startedAt: b.run.startedAt };

  const missing: RowResult[] = [];
  const engineerOnly: string[] = [];
  for (const c of writing) {
    const failedBefore = before.get(c.deviceId!) ?? null;
    const deviations = recordDeviations(run, {
      readPointH: hours,
      replaces: c.outcome === 'replace',
      failedBefore,
      failedAfter: after.get(c.deviceId!) ?? null,
    });
    const reason = reasonOf(c)?.trim() || null;
    const texts = deviations.map((k) => deviationText(k, b, c.serial ?? '?', failedBefore));
    if (needsReason(c.outcome === 'replace', deviations) && (!reason || reason.length < CORRECTION_REASON_MIN)) {
      const why = [
        ...(c.outcome === 'replace'
          ? [`Device ${c.serial} already has a reading at ${hours} h; a correction keeps it as an earlier version and needs a reason.`]
          : []),
        ...texts,
      ];
      missing.push({
        row: c.row,
        serial: c.serial,
        outcome: 'rejected',
        reasons: [...why, `Give a reason of at least ${CORRECTION_REASON_MIN} characters.`],
        late: false,
      });
    }
    if (deviations.length && !can(actor.role, 'measurement.deviation')) engineerOnly.push(...texts);
    out.set(c.row, { reason: needsReason(c.outcome === 'replace', deviations) ? reason : null, deviations });
  }
  if (engineerOnly.length) {
    throw forbidden(
      `Only an engineer may make this change. ${engineerOnly[0]}${engineerOnly.length > 1 ? ` (${engineerOnly.length} readings affected.)` : ''} Nothing was stored.`,
    );
  }
  if (missing.length) {
    throw unprocessable(
      `${missing.length} of ${writing.length} readings would change a stored value or record a deviation and need a reason (see rows). Nothing was stored.`,
      { rows: missing },
    );
  }
  return out;
}

/** The labels of a stored deviation list ('a,b' in the column). */
export const deviationKinds = (s: string | null): RecordDeviationKind[] =>
  s ? s.split(',').filter((k): k is RecordDeviationKind => k in RECORD_DEVIATION_LABEL) : [];

/** Time zero locked for this run (for the readings screen's note). */
export const timeZeroLockedFor = (b: RunBundle) => timeZeroLocked({ state: b.run.state, startedAt: b.run.startedAt });

/** A stored version as the lot screen and the exports show it. */
export function lotVersionView(v: ReadingVersionRow): LotReadingVersion {
  return {
    runCode: v.runCode,
    serial: v.serial,
    readPointH: v.readPointH,
    version: v.version,
    current: v.version === v.currentVersion,
    result: v.result,
    hfe: v.hfe,
    icboA: v.icboA,
    vcesatV: v.vcesatV,
    measuredAt: v.measuredAt.toISOString(),
    enteredByName: v.enteredByName,
    reason: v.reason,
    deviation: deviationKinds(v.deviation),
    recordedAt: v.recordedAt.toISOString(),
  };
}
