/**
 * What the report blocks draw: plain data, built once per report by ReportsService (from the lot
 * API's own figures, never a second computation) and shared by the PDF, the CSV and the
 * qualification report. The shapes are a contract: add fields, do not rename them.
 */
import type { LotVerdict } from '../../../shared/domain/verdicts';
import type { LotDetail, LotReadPointStats } from '../../../shared/schemas/analytics';
import type { DriftChart } from './drift-chart';

export interface ReportLot {
  id: string;
  code: string;
  partNumber: string;
  quantity: number;
  dateCode: string;
  notes: string;
  waferLot: string;
  assemblyLot: string;
  dieRevision: string;
}

/** One plan's judgement of the lot, as the lot view states it. */
export interface ReportPlan {
  planId: string;
  planName: string;
  kind: string;
  verdict: LotVerdict;
  runs: string[];
  planned: number;
  booked: number;
  judged: number;
  removed: number;
  failures: number;
  acceptNumber: number;
  confidence: number;
  planLtpd: number;
  demonstratedLtpd: number | null;
  deviation: string | null;
  reasons: string[];
}

/** A device as the verdict counts it, with its disposition. */
export interface ReportDeviceRow {
  serial: string;
  runCode: string;
  rigCode: string | null;
  socketIndex: number;
  status: 'pass' | 'fail' | 'removed' | 'pending';
  failedAtH: number | null;
  failedBecause: string;
  /** Latest drift on the analysed run (null on other runs or when not measured). */
  latestH: number | null;
  hfeChangePct: number | null;
  icboRatio: number | null;
  vcesatShiftMv: number | null;
  /** "Trip counts as a failure at 168 h: reason (by, when)". */
  disposition: string | null;
}

export interface ReportSignature {
  name: string;
  email: string;
  meaning: string;
  verdict: string;
  signedAt: string;
  dataHash: string;
  /** The data under the signature has changed since: it no longer covers the verdict. */
  stale: boolean;
}

export interface ReportEquipment {
  runCode: string;
  runState: string;
  rigCode: string | null;
  rigName: string | null;
  /** Sockets this lot's devices sat in ("1-24"). */
  sockets: string;
  startedAt: string | null;
  finishedAt: string | null;
  /** The rig's service records in force at the start (the start permit's dates). */
  calibrationDoneAt: string | null;
  calibrationDueAt: string | null;
  interlockTestedAt: string | null;
}

export interface ReportReliability {
  planName: string;
  mechanism: string;
  model: string;
  parameters: string;
  failures: number;
  devices: number;
  deviceHours: number;
  equivalentDeviceHours: number;
  accelerationFactor: number;
  fit60: number | null;
  fit90: number | null;
  method: string;
  /** Why there is no FIT (then the figures above are 0). */
  unavailable: string | null;
}

export interface ReportDeviation {
  kind: 'sample' | 'record' | 'disposition' | 'trip';
  text: string;
}

export interface LotReportData {
  generatedAt: Date;
  lot: ReportLot;
  verdict: LotVerdict;
  verdictLabel: string;
  reasons: string[];
  /** The plan's criteria in the words shared/domain/criteria-words gives (the plan screen's). */
  criteria: string | null;
  plans: ReportPlan[];
  /** The run the charts and drift table come from. */
  run: { id: string; code: string; state: string; stressHours: number } | null;
  readPoints: LotReadPointStats[];
  charts: DriftChart[];
  devices: ReportDeviceRow[];
  reliability: ReportReliability[];
  equipment: ReportEquipment[];
  signatures: ReportSignature[];
  /** SHA-256 of the judged evidence as it stands now (what a current signature covers). */
  evidenceHash: string;
  deviations: ReportDeviation[];
  caution: string;
  /** The lot view itself, for the CSV's full tables. */
  detail: LotDetail;
}
