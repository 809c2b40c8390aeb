/**
 * The evidence a lot verdict stands on — rules declared once (STYLE.md "One rule, one place"):
 * sample size against the plan, per-device dispositions, catastrophic results, read-point
 * completeness and the measuring-condition comparison with time zero. Pure; no I/O.
 */

// ---------------------------------------------------------------------------------------------
// Sample

/** A deviation (booking fewer devices than the plan asks) needs a written reason this long. */
export const DEVIATION_REASON_MIN = 10;

/**
 * Why a booking of `booked` devices falls short of the plan's `planned`, or null when it does not.
 * The plan's sample is per lot: the verdict judges each lot on its own devices against n and c
 * (shared/verdict/judge.ts), so a booking over `lots` lots needs `planned` devices for each of them.
 */
export function sampleShortfall(planned: number, booked: number, lots = 1): string | null {
  const needed = planned * Math.max(1, lots);
  if (booked >= needed) return null;
  if (lots <= 1) return `The plan asks for ${planned} devices; this booking holds ${booked} (${planned - booked} short).`;
  return `Each lot is judged on its own devices: the plan asks for ${planned} per lot, ${needed} for ${lots} lots; this booking holds ${booked} (${needed - booked} short).`;
}

// ---------------------------------------------------------------------------------------------
// Catastrophic results

/**
 * A reading's result: measured values, or a device that could not be measured because it is dead.
 * open / short: the tester found the junction open or shorted; no-reading: no reading was possible
 * (e.g. the tester could not bias it). Each counts as a failure at its read point (common practice:
 * a catastrophic failure fails every end point).
 */
export const MEASUREMENT_RESULTS = ['measured', 'open', 'short', 'no-reading'] as const;
export type MeasurementResult = (typeof MEASUREMENT_RESULTS)[number];
export const CATASTROPHIC_RESULTS = ['open', 'short', 'no-reading'] as const satisfies readonly MeasurementResult[];
export type CatastrophicResult = (typeof CATASTROPHIC_RESULTS)[number];

export const MEASUREMENT_RESULT_LABEL: Record<MeasurementResult, string> = {
  measured: 'Measured',
  open: 'Open',
  short: 'Short',
  'no-reading': 'No reading possible',
};

export const isCatastrophic = (r: MeasurementResult | string | null | undefined): r is CatastrophicResult =>
  (CATASTROPHIC_RESULTS as readonly string[]).includes(r ?? '');

/**
 * A CSV cell's word for a catastrophic result ("OPEN", "short", "N/R", "no reading"), or null.
 * Testers write these words in place of a value (common practice).
 */
export function catastrophicWord(raw: string | null | undefined): CatastrophicResult | null {
  if (!raw) return null;
  const w = raw
    .trim()
    .toLowerCase()
    .replace(/[\s_/-]+/g, '');
  if (w === 'open') return 'open';
  if (w === 'short' || w === 'shorted') return 'short';
  if (w === 'noreading' || w === 'nr' || w === 'noread') return 'no-reading';
  return null;
}

// ---------------------------------------------------------------------------------------------
// Dispositions

/**
 * lost, damaged (in handling), excluded: the device leaves the sample from that read point on
 * (not a failure); trip-failure: a tripped device counts as a failure at that read point;
 * reseated: a tripped device was re-seated and goes on being measured (not a failure; its
 * credited hours still stop at the trip — the socket's accrual latched there).
 */
export const DISPOSITION_KINDS = ['lost', 'damaged', 'excluded', 'trip-failure', 'reseated'] as const;
export type DispositionKind = (typeof DISPOSITION_KINDS)[number];

export const DISPOSITION_LABEL: Record<DispositionKind, string> = {
  lost: 'Lost',
  damaged: 'Damaged in handling',
  excluded: 'Excluded',
  'trip-failure': 'Trip counts as a failure',
  reseated: 'Re-seated after the trip',
};

/** Kinds that only a tripped device can take. */
export const TRIP_DISPOSITIONS: readonly DispositionKind[] = ['trip-failure', 'reseated'];
/** Kinds that take the device out of the sample (it is neither a survivor nor a failure). */
export const REMOVING_DISPOSITIONS: readonly DispositionKind[] = ['lost', 'damaged', 'excluded'];
/** Kinds after which no further reading is expected. */
export const FINAL_DISPOSITIONS: readonly DispositionKind[] = ['lost', 'damaged', 'excluded', 'trip-failure'];
export const DISPOSITION_REASON_MIN = 5;

// ---------------------------------------------------------------------------------------------
// Read-point completeness

export interface CoverageDevice {
  deviceId: string;
}
export interface CoverageReading {
  deviceId: string;
  readPointH: number;
  result: MeasurementResult;
}
export interface CoverageDisposition {
  deviceId: string;
  readPointH: number;
  kind: DispositionKind;
}

export interface ReadPointCoverage {
  readPointH: number;
  expected: number;
  measured: number;
  catastrophic: number;
  /** Devices accounted for by a disposition at or before this read point. */
  disposed: number;
  /** Devices dead at an earlier read point (catastrophic), needing no further reading. */
  deadEarlier: number;
  /** Devices with neither a reading nor a disposition. */
  missing: string[];
  complete: boolean;
}

/**
 * A read point counts only when every sampled device has a reading there, a disposition at or
 * before it (lost, damaged, excluded, trip-failure), or died (catastrophic result) at an earlier
 * read point. Emberlot's rule, after MIL-STD-750 / JESD47 practice that every device in the sample
 * is accounted for (common practice).
 */
export function readPointCoverage(
  devices: readonly CoverageDevice[],
  readings: readonly CoverageReading[],
  dispositions: readonly CoverageDisposition[],
  readPointH: number,
): ReadPointCoverage {
  const at = new Map<string, CoverageReading>();
  const deadBefore = new Set<string>();
  for (const r of readings) {
    if (r.readPointH === readPointH) at.set(r.deviceId, r);
    else if (r.readPointH < readPointH && isCatastrophic(r.result)) deadBefore.add(r.deviceId);
  }
  const disposed = new Set(
    dispositions.filter((d) => d.readPointH <= readPointH && FINAL_DISPOSITIONS.includes(d.kind)).map((d) => d.deviceId),
  );
  const out: ReadPointCoverage = {
    readPointH,
    expected: devices.length,
    measured: 0,
    catastrophic: 0,
    disposed: 0,
    deadEarlier: 0,
    missing: [],
    complete: false,
  };
  for (const d of devices) {
    const r = at.get(d.deviceId);
    if (r) {
      if (isCatastrophic(r.result)) out.catastrophic++;
      else out.measured++;
    } else if (disposed.has(d.deviceId)) out.disposed++;
    else if (deadBefore.has(d.deviceId)) out.deadEarlier++;
    else out.missing.push(d.deviceId);
  }
  out.complete = out.missing.length === 0;
  return out;
}

// ---------------------------------------------------------------------------------------------
// Measuring conditions compared with time zero

/**
 * Measuring temperature may differ from time zero's by at most this (°C). MIL-STD-750 general
 * requirements: room ambient 25 ± 3 °C for electrical measurements (from memory).
 */
export const MEASURING_TEMP_TOLERANCE_C = 3;
/**
 * Test conditions (IC and VCE for hFE, VCB for ICBO) may differ from time zero's by at most this
 * percentage: end-point deltas compare like with like, so the set points must repeat (common
 * practice; 2 % allows a tester's setting resolution).
 */
export const TEST_CONDITION_TOLERANCE_PCT = 2;

/** A value exactly at a tolerance agrees: 0.153 A against 0.15 A is 2.0000000000000018 % in floats. */
const TOLERANCE_EPS = 1e-9;

export interface MeasuringConditions {
  measuredC: number;
  hfeIcA: number | null;
  hfeVceV: number | null;
  icboVcbV: number | null;
}

/**
 * Why a reading's conditions differ from time zero's beyond the tolerances (one sentence each);
 * empty when they agree. A reading so flagged is not judged until an engineer confirms it.
 */
export function conditionDifferences(timeZero: MeasuringConditions, reading: MeasuringConditions): string[] {
  const out: string[] = [];
  const dT = reading.measuredC - timeZero.measuredC;
  if (Math.abs(dT) > MEASURING_TEMP_TOLERANCE_C + TOLERANCE_EPS) {
    out.push(
      `Measured at ${+reading.measuredC.toFixed(1)} °C; time zero at ${+timeZero.measuredC.toFixed(1)} °C (allowed ± ${MEASURING_TEMP_TOLERANCE_C} °C).`,
    );
  }
  const cond = (label: string, unit: string, a: number | null, b: number | null) => {
    if (a === null || b === null || a === 0) return;
    const pct = ((b - a) / Math.abs(a)) * 100;
    if (Math.abs(pct) > TEST_CONDITION_TOLERANCE_PCT + TOLERANCE_EPS) {
      out.push(
        `${label} ${+b.toPrecision(4)} ${unit}; time zero ${+a.toPrecision(4)} ${unit} (${pct > 0 ? '+' : ''}${+pct.toFixed(1)} %, allowed ± ${TEST_CONDITION_TOLERANCE_PCT} %).`,
      );
    }
  };
  cond('IC for hFE', 'A', timeZero.hfeIcA, reading.hfeIcA);
  cond('VCE for hFE', 'V', timeZero.hfeVceV, reading.hfeVceV);
  cond('VCB for ICBO', 'V', timeZero.icboVcbV, reading.icboVcbV);
  return out;
}

export const CONFIRM_REASON_MIN = 5;

/** A reading may be judged when its conditions agree with time zero or an engineer confirmed it. */
export const isJudgeable = (r: { conditionsFlag: string | null; confirmedAt: Date | string | null }) =>
  r.conditionsFlag === null || r.confirmedAt !== null;
