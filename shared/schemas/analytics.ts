/**
 * Lot drift analytics and device-type reliability summaries (manager's trends).
 *
 *   GET /api/analytics/lots                      every lot with its verdict
 *   GET /api/analytics/lots/:lotId               one lot: distributions, trend, verdict reasons, FIT
 *   (the lot report's PDF and CSV moved to /api/reports: shared/schemas/reports.ts)
 *   GET /api/analytics/device-types              one summary per device type
 *   GET /api/analytics/device-types/:id          lots passed, device-hours, AF, FIT, next sample size
 */
import { z } from 'zod';
import type { PlanJudgement } from '../verdict/judge';
import type { ForecastBrief } from './forecast';
import type { RecordDeviationKind } from '../domain/records';
import type { MeasurementResult } from '../evidence';
import type { ModelParameter, StressMechanism } from '../reliability/mechanism-names';

import { LOT_VERDICTS, type LotVerdict } from '../domain/verdicts';
export { LOT_VERDICTS, LOT_VERDICT_LABEL, type LotVerdict } from '../domain/verdicts';

export const lotParamsSchema = z.object({ lotId: z.string().uuid('Not a valid lot id') });
export const deviceTypeParamsSchema = z.object({ id: z.string().uuid('Not a valid device type id') });

export const lotListQuerySchema = z.object({
  deviceTypeId: z.string().uuid().optional(),
  verdict: z.enum(LOT_VERDICTS).optional(),
});

export const deviceTypeQuerySchema = z.object({
  /** LTPD the next qualification must demonstrate, percent (default 3 %: 77 devices at c = 0). */
  ltpdPct: z.coerce.number().finite().gt(0).lt(100).default(3),
  /** Failures the next qualification may accept. */
  acceptNumber: z.coerce.number().int().min(0).max(20).default(0),
});

/** Descriptive summary of one drift measure across the lot's devices at one read point. */
export interface DistributionSummary {
  n: number;
  mean: number;
  sd: number | null;
  min: number;
  max: number;
  p5: number;
  p25: number;
  median: number;
  p75: number;
  p95: number;
}

export interface LotReadPointStats {
  hours: number;
  devicesMeasured: number;
  late: number;
  /** % change of hFE (referred to the reference temperature) from time zero. */
  hfeChangePct: DistributionSummary | null;
  /** ICBO reading / time-zero reading. */
  icboRatio: DistributionSummary | null;
  /** VCE(sat) shift from time zero, mV. */
  vcesatShiftMv: DistributionSummary | null;
  /** Devices failing at this read point (any parameter). */
  failing: number;
  /** Devices that have failed at this or an earlier read point. */
  cumulativeFails: number;
}

export interface TrendFit {
  parameter: 'hfe' | 'icbo' | 'vcesat';
  /** How the lot's typical path was fitted (NIST e-Handbook §8.4.2.3, line through the origin). */
  model: 'linear-origin' | 'log-ratio-origin';
  /** Typical value per read point used for the fit (mean % change, median ratio, mean mV). */
  points: Array<{ hours: number; value: number }>;
  slopePerHour: number;
  /** The limit in the fitted unit (%, ratio or mV, signed in the drift's direction). */
  limit: number;
  /** Hours at which the typical device reaches the limit; null when it moves away from it or is flat. */
  pseudoFailureH: number | null;
  /** Fitted line for charting, 0 → max(target life, last read point). */
  line: Array<{ hours: number; value: number }>;
}

export interface FitFigures {
  failures: number;
  devices: number;
  hoursEach: number;
  deviceHours: number;
  accelerationFactor: number;
  equivalentDeviceHours: number;
  fit60: number;
  fit90: number;
  chiSquare60: number;
  chiSquare90: number;
  constants: {
    boltzmannEvPerK: number;
    kelvinOffset: number;
    eaEv: number;
    useC: number;
    /** Hour-weighted mean of the devices' estimated junction over their credited hours. */
    stressC: number;
    stressBasis: string;
    source: string;
  };
  method: string;
  /** The failure mechanism this FIT is for (never pooled across mechanisms), its model and parameters. */
  mechanism: StressMechanism;
  mechanismLabel: string;
  model: string;
  parameters: ModelParameter[];
  /** Where each device's temperature history came from, and its range. */
  junction: {
    devicesFromTelemetry: number;
    devicesFromChamber: number;
    tjMeanC: number | null;
    tjMinC: number | null;
    tjMaxC: number | null;
  };
}

export interface LotDevice {
  deviceId: string;
  serial: string;
  socketIndex: number;
  status: 'pass' | 'fail' | 'no-time-zero' | 'not-measured';
  firstFailedH: number | null;
  failedParameters: Array<'hfe' | 'icbo' | 'vcesat'>;
  /** Latest read point's values. */
  latestH: number | null;
  hfeChangePct: number | null;
  icboRatio: number | null;
  vcesatShiftMv: number | null;
  hfeNormalised: boolean;
  late: boolean;
}

export interface LotSummary {
  lotId: string;
  lotCode: string;
  deviceTypeId: string;
  partNumber: string;
  dateCode: string;
  /** The date peers are ordered by; read from the date code (YYWW) while lots carry no production date. */
  productionDate: string | null;
  productionDateSource: 'recorded' | 'date-code' | null;
  /** Combined over every plan the lot was stressed under (the worst). */
  verdict: LotVerdict;
  /** One sentence per reason, most important first. */
  reasons: string[];
  /** Each plan's own verdict. */
  planVerdicts: Array<{ planId: string; planName: string; verdict: LotVerdict }>;
  run: { id: string; code: string; state: string; stressHours: number } | null;
  plan: { id: string; name: string; kind: string; durationH: number; acceptNumber: number; sampleSize: number; chamberC: number } | null;
  devicesOnTest: number;
  fails: number;
  latestReadPointH: number | null;
  /** Mean hFE change (%) and median ICBO ratio at the latest read point. */
  latestHfeChangePct: number | null;
  latestIcboRatio: number | null;
  pseudoFailureH: number | null;
  pseudoFailureParameter: 'hfe' | 'icbo' | 'vcesat' | null;
  /** The plan's hFE limit (± %), for the chart's limit band. */
  hfeLimitPct: number | null;
  /** Mean hFE change per read point, for the trends chart (time zero = 0). */
  hfeTrend: Array<{ hours: number; value: number }>;
  /** The verdict forecast's chance of passing (shared/forecast); in the list only. */
  forecast?: ForecastBrief;
}

export interface LotDetail extends LotSummary {
  criteria: { hfeChangePct: number; leakageMultiple: number; leakageFloorA: number; vcesatShiftV: number } | null;
  readPointsH: number[];
  readPoints: LotReadPointStats[];
  trends: TrendFit[];
  /** The judgement per plan: sample, read-point completeness, devices, degradation and Weibull, peers, FIT. */
  plans: LotPlanView[];
  fit: FitFigures | null;
  devices: LotDevice[];
  gainReference: { referenceC: number; xtb: number; normalisedReadings: number };
  /** Other runs this lot was on (the analysis uses `run`). */
  otherRuns: Array<{ id: string; code: string; state: string }>;
  caution: string;
  /** Changes after entry (issue #21): every version of each corrected reading, and the deviations recorded. */
  records: LotRecords;
}

/** One version of a corrected reading of the lot (the earlier ones stay, in the screen and the exports). */
export interface LotReadingVersion {
  runCode: string;
  serial: string;
  readPointH: number;
  version: number;
  current: boolean;
  result: MeasurementResult;
  hfe: number | null;
  icboA: number | null;
  vcesatV: number | null;
  measuredAt: string;
  enteredByName: string | null;
  reason: string | null;
  deviation: RecordDeviationKind[];
  recordedAt: string;
}

export interface LotRecords {
  corrections: LotReadingVersion[];
  /** Versions that recorded a deviation on the lot (time zero after Start, finished run changed, failure withdrawn). */
  deviations: LotReadingVersion[];
}

/** One plan's judgement of a lot, with its FIT from the devices' credited hours. */
export interface LotPlanView extends PlanJudgement {
  fit: FitFigures | null;
  /** Why there is no FIT for this plan's mechanism (e.g. cycles not recorded), else null. */
  fitUnavailable: string | null;
}

export interface PlanAcceleration {
  planId: string;
  planName: string;
  kind: string;
  eaEv: number;
  useC: number;
  /** Hour-weighted mean estimated junction of the devices (from their sockets' telemetry). */
  stressC: number;
  stressBasis: string;
  mechanism: StressMechanism;
  /** Equivalent / credited device-hours (the devices' own histories). */
  accelerationFactor: number;
  devices: number;
  deviceHours: number;
  equivalentDeviceHours: number;
  failures: number;
}

export interface DeviceTypeSummary {
  deviceTypeId: string;
  partNumber: string;
  description: string;
  lots: number;
  lotsTested: number;
  lotsPassed: number;
  lotsDrifting: number;
  lotsFailed: number;
  lotsInProgress: number;
  lotsIncomplete: number;
  lotsInsufficientSample: number;
  devicesTested: number;
  failures: number;
  deviceHours: number;
  /** One FIT per failure mechanism: χ²(CL; 2r+2) / (2·Σ equivalent device-hours) × 10⁹ over that mechanism's plans only. */
  mechanisms: MechanismFitSummary[];
  accelerations: PlanAcceleration[];
  nextQualification: {
    ltpdPct: number;
    confidence: number;
    acceptNumber: number;
    sampleSize: number;
    method: string;
  };
  constants: { boltzmannEvPerK: number; kelvinOffset: number; source: string };
  lotVerdicts: Array<{ lotId: string; lotCode: string; verdict: LotVerdict }>;
}

/** A device type's failure rate for one mechanism, from the plans that stress it. */
export interface MechanismFitSummary {
  mechanism: StressMechanism;
  label: string;
  model: string;
  parameters: ModelParameter[];
  plans: number;
  devices: number;
  deviceHours: number;
  equivalentDeviceHours: number;
  failures: number;
  fit60: number | null;
  fit90: number | null;
  /** Why no FIT is given (e.g. cycles not recorded), else null. */
  unavailable: string | null;
}
