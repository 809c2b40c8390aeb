import { z } from 'zod';
import type { PlanKind } from './plans';
import { DEVIATION_REASON_MIN } from '../evidence';

import { RUN_STATES, type RunState } from '../domain/run-states';
import type { HoldPhase } from '../holds/sequence';
import type { ChamberBandK } from '../domain/standards';

export { RUN_STATES, ON_RIG_STATES, DRIVEN_STATES, HEAT_STATES, TERMINAL_STATES, type RunState } from '../domain/run-states';

export const RUN_STATE_LABEL: Record<RunState, string> = {
  booked: 'Booked',
  loading: 'Loading',
  heating: 'Heating',
  stressing: 'Under stress',
  paused: 'Paused',
  'read-hold': 'Read-point hold',
  cooling: 'Cooling',
  fault: 'Rig fault',
  finished: 'Finished',
  aborted: 'Aborted',
};

import { type RunAction } from '../domain/run-states';
export { RUN_ACTIONS, type RunAction, RUN_ACTION_LABEL } from '../domain/run-states';

/** What a person may do in each state (the scheduler makes the other moves). */
export const ACTIONS_BY_STATE: Record<RunState, readonly RunAction[]> = {
  booked: ['load', 'abort'],
  loading: ['load', 'start', 'abort'],
  heating: ['pause', 'abort'],
  stressing: ['pause', 'abort'],
  paused: ['resume', 'abort'],
  'read-hold': ['measurements-done', 'abort'],
  cooling: ['abort'],
  fault: ['retry', 'abort'],
  finished: [],
  aborted: [],
};

export function allowedActions(state: RunState): readonly RunAction[] {
  return ACTIONS_BY_STATE[state] ?? [];
}

// ---------------------------------------------------------------------------------------------
// Requests

const uuid = (what: string) => z.string().uuid(`Not a valid ${what} id`);
const isoTime = () => z.iso.datetime({ offset: true, message: 'Give a date and time (ISO 8601)' });

export const runIdParamSchema = z.object({ id: uuid('run') });

/**
 * A request's due date and priority (issue #26): the proposer weighs lateness by the priority
 * (shared/domain/priority.ts). No due date (null or omitted) = never late; priority defaults to normal.
 * The service refuses a due date that is already past.
 */
export const requestTermsShape = {
  dueAt: isoTime().nullable().optional(),
  priority: z
    .number({ message: 'Priority is a whole number from 1 (low) to 4 (urgent)' })
    .int('Priority is a whole number from 1 (low) to 4 (urgent)')
    .min(1, 'Priority is a whole number from 1 (low) to 4 (urgent)')
    .max(4, 'Priority is a whole number from 1 (low) to 4 (urgent)')
    .optional(),
};

export const proposalInputSchema = z.object({
  planId: uuid('plan'),
  lotIds: z.array(uuid('lot')).min(1, 'Choose at least one lot').max(12, 'At most 12 lots per run'),
  sampleSize: z.number().int('Whole devices only').positive('At least one device').max(256, 'A board holds at most 256 sockets'),
  /** Earliest start to consider (default now). */
  notBefore: isoTime().optional(),
  ...requestTermsShape,
});
export type ProposalInput = z.infer<typeof proposalInputSchema>;

/** Booking fewer devices than the plan asks: the engineer's written reason (audited). */
export const deviationSchema = z.object({
  reason: z
    .string()
    .trim()
    .min(DEVIATION_REASON_MIN, `Write at least ${DEVIATION_REASON_MIN} characters on why a smaller sample may stand`)
    .max(2000),
});

export const bookRunSchema = proposalInputSchema.extend({
  rigId: uuid('rig'),
  /** Start of the chosen proposal; omitted = the earliest feasible start on the rig. */
  start: isoTime().optional(),
  /** Booking fewer devices than the plan asks (engineer's written reason, audited). */
  deviation: deviationSchema.optional(),
  /** Book despite blocking plan-check findings: an override request approved by a second person (shared/schemas/approvals). */
  override: z.object({ requestId: uuid('override request') }).optional(),
});
export type BookRunInput = z.infer<typeof bookRunSchema>;

/** One rig's share of a sample booked across rigs. */
export const samplePartSchema = z.object({
  rigId: uuid('rig'),
  sampleSize: z.number().int('Whole devices only').positive('At least one device').max(256, 'A board holds at most 256 sockets'),
  start: isoTime().optional(),
});

/**
 * A sample booked as one: a run on each rig named (at most 4), judged together. The plan's sample
 * size must be met over all parts, or a deviation given.
 */
export const bookSampleSchema = z
  .object({
    planId: uuid('plan'),
    lotIds: z.array(uuid('lot')).min(1, 'Choose at least one lot').max(12, 'At most 12 lots per run'),
    parts: z.array(samplePartSchema).min(1, 'Book at least one rig').max(4, 'Split a sample over at most 4 rigs'),
    override: bookRunSchema.shape.override,
    deviation: deviationSchema.optional(),
    ...requestTermsShape,
  })
  .superRefine((b, ctx) => {
    const seen = new Set<string>();
    b.parts.forEach((p, i) => {
      if (seen.has(p.rigId))
        ctx.addIssue({ code: 'custom', path: ['parts', i, 'rigId'], message: 'Each part of a sample goes to a different rig' });
      seen.add(p.rigId);
    });
  });
export type BookSampleInput = z.infer<typeof bookSampleSchema>;

export interface SampleView {
  id: string;
  plannedSize: number;
  bookedSize: number;
  deviation: { reason: string; byName: string | null; at: string } | null;
  runs: Array<{ id: string; code: string; rigCode: string | null; sampleSize: number; state: RunState }>;
}

export interface SampleBooking {
  sample: SampleView;
  runs: RunDetail[];
}

export const runListQuerySchema = z.object({
  state: z.enum(RUN_STATES).optional(),
  rigId: uuid('rig').optional(),
  /** "1": only runs not finished or aborted. */
  open: z.enum(['0', '1']).optional(),
});

export const timelineQuerySchema = z.object({
  from: isoTime().optional(),
  to: isoTime().optional(),
});

const rowVersion = () => z.number({ message: 'Send the rowVersion you last saw' }).int().min(1);

export const runActionSchema = z.object({
  rowVersion: rowVersion(),
  reason: z.string().trim().max(2000).optional(),
});
export type RunActionInput = z.infer<typeof runActionSchema>;

export const abortRunSchema = z.object({
  rowVersion: rowVersion(),
  reason: z.string().trim().min(5, 'Say why the run is aborted (at least 5 characters)').max(2000),
});
export type AbortRunInput = z.infer<typeof abortRunSchema>;

/**
 * Start: the person confirms the plan's voltage and temperature (with the high-voltage and hot-oven
 * caution) that the start permit showed them; the server refuses a start without it.
 */
export const startRunSchema = runActionSchema.extend({
  confirm: z.literal(true, { message: "Confirm the plan's voltage and temperature before starting" }),
});
export type StartRunInput = z.infer<typeof startRunSchema>;

/** Leave the fault state once the cause is fixed: heat again (the reason is audited). */
export const retryRunSchema = z.object({
  rowVersion: rowVersion(),
  reason: z.string().trim().min(5, 'Say what was fixed (at least 5 characters)').max(2000),
});
export type RetryRunInput = z.infer<typeof retryRunSchema>;

/** One check of the start permit (GET /api/runs/:id/permit); each failed one names what is missing. */
export const PERMIT_CHECKS = ['loading', 'time-zero', 'sockets', 'calibration', 'interlock', 'maintenance', 'oven'] as const;
export type PermitCheckKey = (typeof PERMIT_CHECKS)[number];
export interface PermitCheck {
  key: PermitCheckKey;
  label: string;
  ok: boolean;
  /** What was found: the numbers when it passes, what is missing when it does not. */
  message: string;
}

/** What Start will ask the person to confirm, and whether the run may start at all. */
export interface StartPermit {
  runId: string;
  ok: boolean;
  checks: PermitCheck[];
  confirm: {
    rigCode: string | null;
    chamberC: number;
    humidityPct: number | null;
    biasV: number | null;
    /** The bias in words, e.g. "reverse bias of 560 V" or "powered at VCE 20 V". */
    biasText: string;
  };
}

/** Socket index (0-based, as on the rig board) → device serial; "" marks a socket left empty. */
export const socketLoadSchema = z.object({
  rowVersion: rowVersion(),
  /** Socket (or chamber load position) → serial. */
  sockets: z
    .record(
      z.string().regex(/^\d{1,4}$/, 'Socket numbers are 0–255 (chamber positions 0–1999)'),
      z.string().trim().max(40, 'Serials are at most 40 characters'),
    )
    .refine((m) => Object.keys(m).length <= 2000, 'A chamber holds at most 2000 devices')
    .default({}),
  /**
   * A chamber run only: the devices loaded into the chamber as a serial list (no sockets); the
   * server gives each the first free load position of the chamber. Replaces `sockets` when given.
   */
  serials: z.array(z.string().trim().min(1, 'An empty serial').max(40, 'Serials are at most 40 characters')).max(2000).optional(),
  /** Check only: report the flags, store nothing. */
  dryRun: z.boolean().default(false),
});
export type SocketLoadInput = z.infer<typeof socketLoadSchema>;

// ---------------------------------------------------------------------------------------------
// Responses

export interface RunPlanRef {
  id: string;
  planKey: string;
  name: string;
  version: number;
  kind: PlanKind;
  chamberC: number;
  /** The band in kelvin below / above chamberC where hours count. */
  chamberBand: ChamberBandK;
  humidityPct: number | null;
  durationH: number;
  readPointsH: number[];
  biasV: number | null;
  checkStatus: 'block' | 'warn' | 'ok' | 'none';
}

export interface RunRigRef {
  id: string;
  code: string;
  name: string;
  socketCount: number;
  online: boolean;
}

export interface Run {
  id: string;
  code: string;
  state: RunState;
  stateLabel: string;
  plan: RunPlanRef;
  rig: RunRigRef | null;
  lots: Array<{ id: string; code: string }>;
  partNumber: string;
  sampleSize: number;
  /** The sample this run belongs to: the plan's size, the size over all its runs, the deviation. */
  sample: { id: string; plannedSize: number; bookedSize: number; runCodes: string[]; deviation: string | null } | null;
  loadedCount: number;
  trippedCount: number;
  scheduledStart: string | null;
  scheduledEnd: string | null;
  startedAt: string | null;
  finishedAt: string | null;
  stateChangedAt: string;
  stressHours: number;
  targetH: number;
  /**
   * Power cycling (a cycling plan): the credited cycles, the target, and the cycle count of the
   * next read point; its read points and end are counted in cycles. Null for plans in hours.
   */
  cycles: RunCycles | null;
  /** Temperature cycling in a chamber (tc): the cycles counted from the load temperature, the target and the profile; null otherwise. */
  chamberCycles: RunChamberCycles | null;
  /** Next read point to reach (hours), or null after the last. */
  nextReadPointH: number | null;
  /** The read point the run is held at (read-hold) or last reached. */
  lastReadPointH: number | null;
  heatingSince: string | null;
  ambientReachedAt: string | null;
  biasRemovedAt: string | null;
  /** Where a read-point hold or the end of stress stands (shared/holds); null outside them. */
  holdPhase: HoldPhase | null;
  holdPhaseSince: string | null;
  abortReason: string | null;
  /** Why the run is in (or last entered) the fault state; null when it never was. */
  fault: { at: string; reason: string } | null;
  override: { reason: string; byName: string | null } | null;
  allowedActions: RunAction[];
  rowVersion: number;
  createdAt: string;
  /** When the requester needs it finished (null: no due date) and its priority 1 low … 4 urgent. */
  dueAt: string | null;
  priority: number;
}

export interface RunCycles {
  done: number;
  target: number;
  nextReadPointCycles: number | null;
  /** Planned junction swing (K) and the band a cycle's swing must lie in to count. */
  deltaTjC: number;
  band: { lowC: number; highC: number };
  onMin: number;
  offMin: number;
}

export interface RunSocket {
  socket: number;
  /** The device in the socket (its history: /devices/units/:deviceId). */
  deviceId: string;
  serial: string;
  lotCode: string;
  accruedHours: number;
  tripped: boolean;
  tripReason: string | null;
  failedAtH: number | null;
  /** Power cycling only: credited and missed cycles and the junction swing (K) last reported. */
  cycles?: { done: number; missed: number; lastDTjLowC: number | null; lastDTjHighC: number | null };
}

export interface RunAuditEntry {
  id: string;
  at: string;
  actor: string;
  action: string;
  reason: string | null;
  details: Record<string, unknown>;
}

/** A tc run's count and its profile (shared/chamber/profile.ts). */
export interface RunChamberCycles {
  done: number;
  target: number;
  nextReadPointCycles: number | null;
  lowC: number;
  highC: number;
  dwellMin: number;
  rampKPerMin: number;
  periodMin: number;
  /** Where the counter stands in the cycle under way. */
  phase: 'to-hot' | 'hot' | 'to-cold' | 'cold' | null;
  /** Smallest load swing (K) of the counted cycles. */
  minSwingK: number | null;
  excursions: number;
}

/** A chamber's latest report and its recent profile (air and load), for the run page of an unbiased run. */
export interface RunChamberView {
  latest: { at: string; airC: number; loadC: number; setpointC: number; humidityPct: number | null; pressureKPa: number | null } | null;
  /** Recent reports, oldest first: chamber clock (min), air and load (°C). */
  profile: Array<{ clockMin: number; airC: number; loadC: number }>;
}

export interface RunDetail extends Run {
  /** Unbiased chamber runs only: the chamber's reports; null for socket runs. */
  chamber: RunChamberView | null;
  sockets: RunSocket[];
  audit: RunAuditEntry[];
  /** Sockets of the rig used by other runs on it now (not offered for loading). */
  socketsTaken: number[];
}

export const SOCKET_PROBLEMS = [
  'empty',
  'duplicate',
  'wrong-lot',
  'unknown-serial',
  'in-other-run',
  'socket-taken',
  'no-such-socket',
  'too-many',
] as const;
export type SocketProblem = (typeof SOCKET_PROBLEMS)[number];

export interface SocketFlag {
  socket: number;
  serial: string;
  problem: SocketProblem;
  /** Only 'empty' is informational; every other problem stops the map from being stored. */
  blocking: boolean;
  message: string;
}

export interface SocketLoadResult {
  /** False for a dry run or when a blocking flag refused the map. */
  stored: boolean;
  needed: number;
  loaded: number;
  flags: SocketFlag[];
  readyToStart: boolean;
  summary: string;
  run: RunDetail;
}

export interface ProposalOption {
  rigId: string;
  rigCode: string;
  rigName: string;
  online: boolean;
  start: string;
  end: string;
  durationH: number;
  spareSockets: number;
  /** Why it cannot start at the requested time (empty when it can). */
  delayReasons: string[];
  /** Clock hours past the request's due date at this option's end (0 when on time; null: no due date). */
  lateH: number | null;
}

export interface ProposalRefusal {
  rigId: string;
  rigCode: string;
  rigName: string;
  reasons: string[];
}

export interface ProposalResult {
  plan: RunPlanRef;
  sampleSize: number;
  durationH: number;
  /** Plan-check findings that block booking unless overridden. */
  blockingFindings: Array<{ code: string; title: string; explanation: string }>;
  /** Problems with the request itself (lots of another device type, too few devices). */
  problems: string[];
  options: ProposalOption[];
  refusals: ProposalRefusal[];
}

export interface TimelineBar {
  runId: string;
  code: string;
  state: RunState;
  stateLabel: string;
  start: string;
  end: string;
  planName: string;
  chamberC: number;
  humidityPct: number | null;
  sampleSize: number;
  stressHours: number;
  targetH: number;
  dueAt: string | null;
  priority: number;
  /** Clock hours the projected end lies past the due date (0: on time; null: no due date). */
  lateH: number | null;
}

export interface TimelineRow {
  rigId: string;
  code: string;
  name: string;
  socketCount: number;
  online: boolean;
  active: boolean;
  bars: TimelineBar[];
  maintenance: Array<{ id: string; start: string; end: string; reason: string }>;
}

export interface Timeline {
  from: string;
  to: string;
  now: string;
  /** Wall ms per stress-clock hour (the demo clock is accelerated). */
  msPerClockH: number;
  rows: TimelineRow[];
}

// ---------------------------------------------------------------------------------------------
// The calendar: booked runs ordered by priority-weighted lateness (shared/scheduling/tardiness.ts)

/** One booked run's window in the calendar proposal. */
export interface CalendarWindow {
  rigId: string;
  rigCode: string;
  start: string;
  end: string;
  /** Clock hours past the due date at this end (0: on time; null: no due date). */
  lateH: number | null;
}

export interface CalendarProposalRun {
  runId: string;
  code: string;
  rowVersion: number;
  priority: number;
  dueAt: string | null;
  /** The booking as it stands (its projected window). */
  current: CalendarWindow;
  proposed: CalendarWindow;
  moved: boolean;
  /** Why the booking as it stands breaks the sharing rule now (empty when it does not): such a run moves even if later. */
  currentConflicts: string[];
}

export interface CalendarProposal {
  /** 'exact' (branch and bound) or 'heuristic' (ATC + local search): shared/scheduling/tardiness.ts. */
  method: 'exact' | 'heuristic';
  now: string;
  /** Σ weight × hours late, now and as proposed (weighted clock hours). */
  currentWeightedLateH: number;
  proposedWeightedLateH: number;
  runs: CalendarProposalRun[];
  /** Booked runs no rig can take now, with the reasons. */
  unplaced: Array<{ runId: string; code: string; reasons: string[] }>;
}

/** Accept (part of) a calendar proposal: each run's new window, against the version it was proposed for. */
export const calendarApplySchema = z.object({
  moves: z
    .array(
      z.object({
        runId: uuid('run'),
        rowVersion: rowVersion(),
        rigId: uuid('rig'),
        start: isoTime(),
      }),
    )
    .min(1, 'Choose at least one run to move')
    .max(100, 'At most 100 runs at once')
    .refine((ms) => new Set(ms.map((x) => x.runId)).size === ms.length, 'Each run once'),
});
export type CalendarApplyInput = z.infer<typeof calendarApplySchema>;

export interface CalendarApplyResult {
  moved: number;
  runs: Array<{ runId: string; code: string; rigCode: string; start: string; end: string }>;
}
