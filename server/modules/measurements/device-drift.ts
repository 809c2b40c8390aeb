/**
 * Drift of one device across a run's read points: hFE referred to the device type's reference
 * temperature, change from time zero per parameter, pass/fail against the plan's criteria and the
 * first read point that failed. Pure; the statistics come from shared/stats.
 */
import type { Criteria } from '../../../shared/schemas/plans';
import type { DeviceReadPointDrift, DeviceDriftView } from '../../../shared/schemas/measurements';
import { deviceDrift, referredGain } from '../../../shared/stats';

export { GAIN_REFERENCE_TOLERANCE_C, referredGain, type GainReference } from '../../../shared/stats';

export const GAIN_LAW = 'β(T) = β_ref·(T/T_ref)^XTB, kelvin';
export const GAIN_LAW_SOURCE = 'Gummel–Poon model as in SPICE';

export interface ReadingInput {
  readPointH: number;
  hfe: number | null;
  icboA: number | null;
  vcesatV: number | null;
  measuredC: number;
  late: boolean;
}

/**
 * All read points of one device. Time zero is read point 0; without it no drift is judged.
 * A device's first failure is the earliest read point where any judged parameter failed.
 */
export function driftOfDevice(
  readings: ReadingInput[],
  criteria: Criteria,
  gain: { referenceC: number; xtb: number },
  /** false: the parameters' reason texts are left empty (lot analytics judges thousands, shows none). */
  reasons = true,
): Pick<DeviceDriftView, 'status' | 'firstFailedH' | 'readPoints'> {
  const sorted = [...readings].sort((a, b) => a.readPointH - b.readPointH);
  const zero = sorted.find((r) => r.readPointH === 0);
  const points: DeviceReadPointDrift[] = [];
  const t0 = zero ? { hfe: referredGain(zero.hfe, zero.measuredC, gain).hfe, icboA: zero.icboA, vcesatV: zero.vcesatV } : null;
  let firstFailedH: number | null = null;
  for (const r of sorted) {
    const g = referredGain(r.hfe, r.measuredC, gain);
    const base: DeviceReadPointDrift = {
      readPointH: r.readPointH,
      measuredC: r.measuredC,
      hfeRaw: r.hfe,
      hfe: g.hfe,
      hfeNormalised: g.normalised,
      hfeNote: g.note,
      icboA: r.icboA,
      vcesatV: r.vcesatV,
      late: r.late,
      parameters: null,
      pass: null,
      failed: [],
    };
    if (t0 && r.readPointH > 0) {
      const d = deviceDrift({ timeZero: t0, reading: { hfe: g.hfe, icboA: r.icboA, vcesatV: r.vcesatV }, criteria, reasons });
      base.parameters = d.parameters;
      const judged = d.parameters.some((p) => p.pass !== null);
      base.pass = judged ? d.pass : null;
      base.failed = d.failed;
      if (d.failed.length && firstFailedH === null) firstFailedH = r.readPointH;
    }
    points.push(base);
  }
  const status: DeviceDriftView['status'] = !sorted.length
    ? 'not-measured'
    : !zero
      ? 'no-time-zero'
      : firstFailedH !== null
        ? 'fail'
        : 'pass';
  return { status, firstFailedH, readPoints: points };
}
