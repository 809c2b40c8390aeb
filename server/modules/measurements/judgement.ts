/**
 * How a run's readings are judged, shared by the service, the records gate, evidence, analytics and
 * the seed: drift per device, the condition flag against time zero, and each device's first failed
 * read point (mirrored into run_sockets.failed_at_h).
 */
import type { EntityManager } from 'typeorm';
import type { RunDriftResult } from '../../../shared/schemas/measurements';
import { conditionDifferences, isCatastrophic, isJudgeable, type MeasuringConditions } from '../../../shared/evidence';
import { DeviceDispositionEntity, MeasurementEntity, RunSocketEntity } from '../../db/entities';
import { driftOfDevice, GAIN_LAW, GAIN_LAW_SOURCE, type ReadingInput } from './device-drift';
import type { RunBundle, RunDeviceRow } from './run-data';

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

/** A reading as the failure judgement reads it. */
export type Judged = Pick<
  MeasurementEntity,
  | 'deviceId'
  | 'readPointH'
  | 'result'
  | 'hfe'
  | 'hfeIcA'
  | 'hfeVceV'
  | 'icboA'
  | 'icboVcbV'
  | 'vcesatV'
  | 'bvceoV'
  | 'measuredC'
  | 'measuredAt'
  | 'late'
  | 'conditionsFlag'
  | 'confirmedAt'
>;

/**
 * Every later reading compared with its device's time zero (which may itself have been corrected):
 * a changed flag is kept and any earlier confirmation of it is withdrawn. Pure; the same objects
 * come back where nothing changed.
 */
export function withFlagsRefreshed<T extends Judged>(ms: readonly T[]): T[] {
  const t0 = new Map(ms.filter((x) => x.readPointH === 0 && x.result === 'measured').map((x) => [x.deviceId, x]));
  return ms.map((x) => {
    if (x.readPointH === 0) return x;
    const zero = t0.get(x.deviceId);
    const flag = zero && x.result === 'measured' ? conditionFlagText(zero, x) : null;
    return flag === x.conditionsFlag ? x : { ...x, conditionsFlag: flag, confirmedAt: null };
  });
}

/** Stores what withFlagsRefreshed changed (flag, confirmation withdrawn) for a whole run. */
export async function refreshConditionFlags(m: EntityManager, runId: string) {
  const ms = await m.find(MeasurementEntity, { where: { runId } });
  const next = withFlagsRefreshed(ms);
  for (let i = 0; i < ms.length; i++) {
    if (next[i] === ms[i]) continue;
    await m.update(
      MeasurementEntity,
      { id: ms[i].id },
      { conditionsFlag: next[i].conditionsFlag, confirmedAt: null, confirmedById: null, confirmReason: null },
    );
  }
}

/**
 * Each device's first failed read point: the first failing the plan's deltas, with a catastrophic
 * result (open, short, no reading), or a trip recorded as a failure — whichever comes first.
 */
export function firstFailureMap(
  b: DriftSource,
  ms: readonly Judged[],
  trips: ReadonlyArray<Pick<DeviceDispositionEntity, 'deviceId' | 'readPointH'>>,
): Map<string, number | null> {
  const drift = runDrift(b, ms.filter(isJudgeable));
  const earliest = (a: number | null, c: number | null) => (a === null ? c : c === null ? a : Math.min(a, c));
  const out = new Map<string, number | null>();
  for (const d of drift.devices) {
    let first = d.firstFailedH;
    for (const x of ms) if (x.deviceId === d.deviceId && isCatastrophic(x.result)) first = earliest(first, x.readPointH);
    for (const t of trips) if (t.deviceId === d.deviceId) first = earliest(first, t.readPointH);
    out.set(d.deviceId, first);
  }
  return out;
}

/** run_sockets.failed_at_h mirrors firstFailureMap so the floor and scheduler can see it. */
export async function refreshFirstFailures(m: EntityManager, b: RunBundle) {
  const ms = await m.find(MeasurementEntity, { where: { runId: b.run.id } });
  const trips = await m.find(DeviceDispositionEntity, { where: { runId: b.run.id, kind: 'trip-failure' } });
  for (const [deviceId, first] of firstFailureMap(b, ms, trips)) {
    const current = b.devices.find((x) => x.deviceId === deviceId)?.failedAtH ?? null;
    if (current !== first) await m.update(RunSocketEntity, { runId: b.run.id, deviceId }, { failedAtH: first });
  }
}
