/**
 * The evidence a lot verdict is judged on: a typed, pure input (no I/O) that the server builds from
 * the database and `judgeLot` (shared/verdict/judge.ts) reads. The data side (runs across rigs booked
 * as one sample, dispositions, catastrophic results, credited hours, measuring conditions) fills it;
 * the judging side never looks at tables.
 *
 * Units are SI throughout (A, V, °C, hours). Dates are ISO strings.
 */
import type { Criteria } from '../schemas/plans';
import type { PlanKind } from '../domain/stress';

// ---------------------------------------------------------------------------------------------
// Rules of the trade used to build the evidence (declared once; both sides import them)
// ---------------------------------------------------------------------------------------------

/** What a read point can hold for one device besides a measured value: catastrophic results count as failures. */
export const CATASTROPHIC_RESULTS = ['open', 'short', 'no-reading'] as const;
export type CatastrophicResult = (typeof CATASTROPHIC_RESULTS)[number];
export const CATASTROPHIC_LABEL: Record<CatastrophicResult, string> = {
  open: 'open',
  short: 'short',
  'no-reading': 'no reading possible',
};

/**
 * Why a sampled device has no reading at a read point. lost / damaged-in-handling / excluded take
 * the device out of the sample from that read point on (it is neither a survivor nor a failure);
 * failure counts it as a failure at that read point (e.g. a tripped socket judged a failure).
 */
export const DISPOSITION_KINDS = ['lost', 'damaged-in-handling', 'excluded', 'failure'] as const;
export type DispositionKind = (typeof DISPOSITION_KINDS)[number];
export const DISPOSITION_LABEL: Record<DispositionKind, string> = {
  lost: 'lost',
  'damaged-in-handling': 'damaged in handling',
  excluded: 'excluded',
  failure: 'counted as a failure',
};

/** What was decided about a device whose socket tripped; null while undecided. */
export const TRIP_OUTCOMES = ['failure', 're-seated', 'excluded'] as const;
export type TripOutcome = (typeof TRIP_OUTCOMES)[number];

/**
 * Tolerances within which a read point's measuring conditions count as the same as time zero
 * (common practice: a parametric tester's set points repeat to well under 1 %; a handler's
 * temperature to about ±2 °C). Beyond them the reading is flagged and not judged until confirmed.
 */
export const MEASURING_TOLERANCE = {
  /** |T − T0| in °C. */
  temperatureC: 2,
  /** Relative difference of a bias set point (IC and VCE for hFE, VCB for ICBO). */
  setPointRel: 0.02,
} as const;

export interface MeasuringConditions {
  /** Measuring temperature, °C. */
  measuredC: number | null;
  /** IC and VCE at which hFE was measured. */
  hfeIcA: number | null;
  hfeVceV: number | null;
  /** VCB at which ICBO was measured. */
  icboVcbV: number | null;
}

/**
 * Which measuring conditions of a reading differ from the device's time-zero reading beyond
 * MEASURING_TOLERANCE, in words ("measured at 35 °C, time zero at 25 °C"). Empty when they agree
 * or one side does not state the condition.
 */
export function conditionDifferences(timeZero: MeasuringConditions, reading: MeasuringConditions): string[] {
  const out: string[] = [];
  if (timeZero.measuredC !== null && reading.measuredC !== null && Math.abs(reading.measuredC - timeZero.measuredC) > MEASURING_TOLERANCE.temperatureC) {
    out.push(`measured at ${reading.measuredC} °C, time zero at ${timeZero.measuredC} °C`);
  }
  const setPoint = (label: string, a: number | null, b: number | null, unit: string) => {
    if (a === null || b === null || a === 0) return;
    if (Math.abs(b - a) / Math.abs(a) > MEASURING_TOLERANCE.setPointRel) out.push(`${label} ${+b.toPrecision(4)} ${unit}, time zero ${+a.toPrecision(4)} ${unit}`);
  };
  setPoint('IC for hFE', timeZero.hfeIcA, reading.hfeIcA, 'A');
  setPoint('VCE for hFE', timeZero.hfeVceV, reading.hfeVceV, 'V');
  setPoint('VCB for ICBO', timeZero.icboVcbV, reading.icboVcbV, 'V');
  return out;
}

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
  /** Delta limits (change from time zero). */
  criteria: Criteria;
  /** Data-sheet limits per parameter; empty when the device type stores none. */
  absoluteLimits: AbsoluteLimit[];
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

export interface Disposition {
  kind: DispositionKind;
  /** The read point from which it applies (the device has no reading there or after). */
  readPointH: number;
  reason: string;
  by: string;
  at: string;
}

export interface TripEvidence {
  /** Stress hours the socket had accrued when it tripped. */
  atH: number;
  at: string;
  reason: string;
  /** What was decided; null while undecided (the device's next read point is then incomplete). */
  outcome: TripOutcome | null;
  decidedBy: string | null;
  decidedAt: string | null;
}

export interface DeviceEvidence {
  deviceId: string;
  serial: string;
  runId: string;
  socketIndex: number;
  /** Stress hours credited to this device (its socket's accrual; a trip ends it). */
  creditedHours: number;
  readings: ReadingEvidence[];
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
export function planConditionsKey(p: Pick<PlanConditions, 'kind' | 'chamberC' | 'humidityPct' | 'bias' | 'cycle' | 'durationH' | 'readPointsH'>): string {
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
