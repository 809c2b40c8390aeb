/**
 * The evidence a lot verdict is judged on: a typed, pure input (no I/O) that the server builds from
 * the database and `judgeLot` (shared/verdict/judge.ts) reads. The data side (runs across rigs booked
 * as one sample, dispositions, catastrophic results, credited hours, measuring conditions) fills it;
 * the judging side never looks at tables.
 *
 * Units are SI throughout (A, V, °C, hours). Dates are ISO strings.
 */
import type { Criteria, EndPointLimits } from '../schemas/plans';
import type { PlanKind } from '../domain/stress';
import type { StressSegment } from '../reliability';
import type { CyclingExposure } from '../reliability/mechanisms';
import type { CatastrophicResult, DispositionKind } from '../evidence';

// The rules of the evidence (catastrophic results, disposition kinds, the measuring-condition
// comparison with time zero) are declared once in shared/evidence and only re-used here.
export {
  CATASTROPHIC_RESULTS,
  DISPOSITION_KINDS,
  DISPOSITION_LABEL,
  MEASUREMENT_RESULT_LABEL,
  conditionDifferences,
  type CatastrophicResult,
  type DispositionKind,
  type MeasuringConditions,
} from '../evidence';

// ---------------------------------------------------------------------------------------------
// The evidence
// ---------------------------------------------------------------------------------------------

export type EndPointParameter = 'hfe' | 'icbo' | 'vcesat' | 'bvceo';

/**
 * A data-sheet (absolute) end-point limit for one parameter, at stated test conditions.
 * min/max null = no limit on that side (e.g. hFE min 40 max 250; ICBO max 50 nA at VCB 60 V;
 * BVCEO min 80 V).
 */
export interface AbsoluteLimit {
  parameter: EndPointParameter;
  min: number | null;
  max: number | null;
  /** The conditions the data sheet states, in words ("IC 150 mA, VCE 5 V, 25 °C"). */
  conditions: string;
}

/** The data sheet's limits stored on a plan's criteria (shared/schemas/plans endPointLimitsSchema), one per parameter. */
export function absoluteLimits(l: EndPointLimits | undefined | null): AbsoluteLimit[] {
  if (!l) return [];
  const at = (parts: Array<string | null>) => parts.filter(Boolean).join(', ');
  const fmt = (x: number) => +x.toPrecision(4);
  const out: AbsoluteLimit[] = [];
  if (l.hfeMin !== null || l.hfeMax !== null) {
    out.push({
      parameter: 'hfe',
      min: l.hfeMin,
      max: l.hfeMax,
      conditions: at([
        l.hfeIcA !== null ? `IC ${fmt(l.hfeIcA)} A` : null,
        l.hfeVceV !== null ? `VCE ${fmt(l.hfeVceV)} V` : null,
        `${l.atC} °C`,
      ]),
    });
  }
  if (l.icboMaxA !== null)
    out.push({
      parameter: 'icbo',
      min: null,
      max: l.icboMaxA,
      conditions: at([l.icboVcbV !== null ? `VCB ${fmt(l.icboVcbV)} V` : null, `${l.atC} °C`]),
    });
  if (l.vcesatMaxV !== null) out.push({ parameter: 'vcesat', min: null, max: l.vcesatMaxV, conditions: `${l.atC} °C` });
  if (l.bvceoMinV !== null) out.push({ parameter: 'bvceo', min: l.bvceoMinV, max: null, conditions: `${l.atC} °C` });
  return out;
}

/** The stress conditions of the plan a lot was stressed under (what makes two lots peers). */
export interface PlanConditions {
  /** The plan (version) id and its display name. */
  planId: string;
  name: string;
  /** Plan version number when plans are versioned (informational; peers are matched on conditions). */
  version: number | null;
  kind: PlanKind;
  chamberC: number;
  humidityPct: number | null;
  bias: { vcbV: number | null; vebV: number | null; vceV: number | null; ibA: number | null; icA: number | null };
  cycle: { onMin: number; offMin: number; deltaTjC: number; cycles: number } | null;
  durationH: number;
  readPointsH: number[];
  sampleSize: number;
  acceptNumber: number;
  /** Delta limits (change from time zero) and, in `criteria.limits`, the data sheet's absolute limits. */
  criteria: Criteria;
  /** For FIT: activation energy, use and stress temperature. */
  eaEv: number;
  useC: number;
  stressC: number;
  stressBasis: string;
}

/** One run of the sample (a sample may be split across rigs: several linked runs judged as one). */
export interface SampleRun {
  runId: string;
  runCode: string;
  rigCode: string | null;
  /** Run state (shared/domain/run-states): planned, booked, running, paused, finished, aborted… */
  state: string;
  /** Stress hours the run has accrued. */
  stressHours: number;
}

/** A smaller sample than the plan asks, booked on purpose and recorded. */
export interface SampleDeviation {
  /** Devices booked. */
  sampleSize: number;
  reason: string;
  by: string;
  at: string;
}

export interface Confirmation {
  by: string;
  at: string;
  note: string;
}

/** One device's result at one read point (read point 0 = time zero). */
export interface ReadingEvidence {
  readPointH: number;
  /** 'measured', or a catastrophic result (a failure at this read point). */
  result: 'measured' | CatastrophicResult;
  hfe: number | null;
  hfeIcA: number | null;
  hfeVceV: number | null;
  icboA: number | null;
  icboVcbV: number | null;
  vcesatV: number | null;
  bvceoV: number | null;
  /** Measuring temperature, °C. */
  measuredC: number | null;
  measuredAt: string | null;
  /** Measured outside the window after bias removal. */
  late: boolean;
  /**
   * Measuring conditions that differ from time zero beyond MEASURING_TOLERANCE (conditionDifferences);
   * empty when they agree. A reading with differences is not judged until `confirmed`.
   */
  conditionDifferences: string[];
  confirmed: Confirmation | null;
}

/**
 * One per device per run (shared/evidence DISPOSITION_KINDS): lost / damaged / excluded take the
 * device out of the sample from `readPointH` on; trip-failure counts a tripped device as a failure
 * at `readPointH`; reseated lets a tripped device go on being judged on its readings.
 */
export interface Disposition {
  kind: DispositionKind;
  /** The read point from which it applies (the device has no reading there or after). */
  readPointH: number;
  reason: string;
  by: string;
  at: string;
}

export interface TripEvidence {
  /** Credited stress hours when the socket tripped (its accrual latches there). */
  atH: number;
  at: string | null;
  reason: string | null;
}

export interface DeviceEvidence {
  deviceId: string;
  serial: string;
  runId: string;
  socketIndex: number;
  /** Stress hours credited to this device (its socket's accrual; a trip ends it). */
  creditedHours: number;
  /** The credited hours by estimated junction temperature (its socket's telemetry); null/absent when not recorded. */
  stressSegments?: StressSegment[] | null;
  /** Power cycling: cycles counted and the measured junction swing; null/absent until recorded per socket. */
  cycling?: CyclingExposure | null;
  readings: ReadingEvidence[];
  /** A tripped device without a trip-failure, reseated or excluded disposition is undecided: its later read points are incomplete. */
  dispositions: Disposition[];
  trip: TripEvidence | null;
}

/** One plan under which the lot was stressed, with its sample. */
export interface PlanEvidence {
  plan: PlanConditions;
  runs: SampleRun[];
  deviation: SampleDeviation | null;
  devices: DeviceEvidence[];
}

export interface LotEvidence {
  lot: {
    id: string;
    code: string;
    partNumber: string;
    deviceTypeId: string;
    dateCode: string;
    /** ISO date the lot was made; peers are ordered by it. */
    productionDate: string | null;
    /** Where productionDate came from: recorded on the lot, or read from its date code (YYWW). */
    productionDateSource: 'recorded' | 'date-code' | null;
  };
  /** Gain–temperature law for referring hFE to a reference temperature; null = no normalisation. */
  gainReference: { referenceC: number; xtb: number } | null;
  plans: PlanEvidence[];
}

/**
 * A date from a YYWW date code (the Monday of ISO week WW of 20YY), e.g. "2614" → 2026-03-30.
 * Common practice for semiconductor date codes; null when the code is not four digits or the week
 * is out of range.
 */
export function dateFromDateCode(code: string): string | null {
  const m = /^(\d{2})(\d{2})$/.exec(code.trim());
  if (!m) return null;
  const year = 2000 + Number(m[1]);
  const week = Number(m[2]);
  if (week < 1 || week > 53) return null;
  // ISO week 1 holds January 4th; its Monday is the week's start.
  const jan4 = Date.UTC(year, 0, 4);
  const dow = (new Date(jan4).getUTCDay() + 6) % 7;
  const monday = jan4 - dow * 86_400_000 + (week - 1) * 7 * 86_400_000;
  return new Date(monday).toISOString().slice(0, 10);
}

/**
 * The key under which two lots count as peers: the same stress conditions (kind, chamber,
 * humidity, bias, cycling, duration, read points). Plan versions with equal conditions share a key.
 */
export function planConditionsKey(
  p: Pick<PlanConditions, 'kind' | 'chamberC' | 'humidityPct' | 'bias' | 'cycle' | 'durationH' | 'readPointsH'>,
): string {
  return JSON.stringify([
    p.kind,
    p.chamberC,
    p.humidityPct,
    [p.bias.vcbV, p.bias.vebV, p.bias.vceV, p.bias.ibA, p.bias.icA],
    p.cycle ? [p.cycle.onMin, p.cycle.offMin, p.cycle.deltaTjC, p.cycle.cycles] : null,
    p.durationH,
    [...p.readPointsH].sort((a, b) => a - b),
  ]);
}

/** Another lot's control values, for the peer comparison. */
export interface PeerLot {
  lotId: string;
  lotCode: string;
  productionDate: string | null;
  /** planConditionsKey of the plan it was stressed under. */
  conditionsKey: string;
  /** Mean hFE change (%) and median ICBO ratio per read point. */
  values: Array<{ parameter: 'hfe' | 'icbo'; readPointH: number; value: number }>;
}
