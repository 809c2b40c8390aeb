/** Live floor API (/api/floor): rig tiles, a rig's socket board, its temperature chart. */
import type { HoldPhase } from '../holds/sequence';
import type { ChamberStepName } from '../domain/chamber-methods';
import { z } from 'zod';
import type { RunState } from '../domain/run-states';
import { CHART_MAX_SPAN_MS, type TelemetryTier } from '../domain/telemetry-tiers';
import { rigCodeInputSchema } from './rigs';

export const floorRigParamSchema = z.object({ code: rigCodeInputSchema });

/** One rig on the floor. Counts come from the rig's newest telemetry message and its current run. */
export interface FloorTile {
  rigId: string;
  code: string;
  name: string;
  location: string;
  active: boolean;
  online: boolean;
  lastSeenAt: string | null;
  /** Rig's own time of its newest stored message. */
  lastSampleAt: string | null;
  chamberC: number | null;
  setpointC: number | null;
  humidityPct: number | null;
  maxTempC: number;
  socketCount: number;
  /** Sockets with bias on in the newest message. */
  powered: number;
  /** Sockets tripped (newest message or latched by the run). */
  tripped: number;
  /** Sockets with no device loaded by the current run (all of them without a run). */
  empty: number;
  /** Hottest case temperature in the newest message. */
  maxCaseC: number | null;
  /** Unacknowledged alarms on this rig. */
  openAlarms: number;
  /** A chamber for the unbiased kinds (rig kind 'chamber'); null for a burn-in oven. */
  chamber: FloorChamber | null;
  /** Sockets whose thermal path is flagged as degrading (a live 'thermal-path' alarm; server/modules/thermal). */
  thermalFlags: number[];
  run: {
    id: string;
    code: string;
    state: RunState;
    stressHours: number;
    /** Next read point (stress hours) and the stress hours left to it; null when not stressing. */
    nextReadPointH: number | null;
    hoursToNextReadPoint: number | null;
    /** Wall-clock estimate at the lab's stress-clock rate. */
    nextReadPointEta: string | null;
  } | null;
}

/** Where a chamber's programme stands (shared/domain/chamber-methods.ts `chamberStepOf`). */
export type ChamberStep = ChamberStepName;

/**
 * A chamber on the floor (tc / htsl / ac): its newest report (air, load — a probe among the
 * devices, what the methods judge — humidity, vessel pressure), the programme's step, the cycle
 * count of a cycling run, the devices loaded and the open excursion alarms.
 */
export interface FloorChamber {
  /** 'cycling' (it can cool: tc), 'vessel' (a pressure vessel: autoclave / HAST, also dry storage), else 'oven' (storage). */
  type: 'cycling' | 'vessel' | 'oven';
  minTempC: number | null;
  maxPressureKPa: number | null;
  reportAt: string | null;
  airC: number | null;
  loadC: number | null;
  setpointC: number | null;
  humidityPct: number | null;
  pressureKPa: number | null;
  doorOpen: boolean | null;
  /** The running plan's kind (tc / htsl / ac), null without a run. */
  planKind: string | null;
  step: ChamberStep;
  /** tc: cycles counted and the plan's target; null otherwise. */
  cycles: { done: number; target: number } | null;
  /** Devices loaded by the current run. */
  loaded: number;
  /** Open (unacknowledged) 'chamber out of band' alarms. */
  excursionAlarms: number;
}

export interface FloorSocket {
  index: number;
  caseC: number | null;
  vV: number | null;
  iA: number | null;
  biasOn: boolean;
  tripped: boolean;
  /** Device loaded by the current run, if any. */
  serial: string | null;
  tripReason: string | null;
  /**
   * Estimated junction: case + θjc × |V·I| of this sample (shared/physics junctionFromTelemetry, the
   * estimate credit and protection use); null without a loaded device or a reading.
   */
  junction: { tjC: number; caseC: number; thetaJcCPerW: number; powerW: number } | null;
  /** Power cycling (a cycling run): the socket's credited cycles of the run's target and its last swing (K). */
  cycles?: { done: number; target: number; lastDTjLowC: number | null; lastDTjHighC: number | null };
}

export interface FloorBoard {
  tile: FloorTile;
  /** Seq and rig time of the message the readings come from. */
  seq: number | null;
  sampleAt: string | null;
  sockets: FloorSocket[];
  /** A chamber (no sockets): its recent reports, oldest first — air and load (°C) by report time. */
  chamberProfile?: Array<{ t: string; airC: number; loadC: number }>;
}

export const CHART_MAX_POINTS = 1000;
export const CHART_MAX_SOCKETS = 8;
/** Which tier a span reads and the longest span: shared/domain/telemetry-tiers.ts (one rule, one place). */
export { CHART_RAW_SPAN_MS, CHART_MINUTE_SPAN_MS, CHART_MAX_SPAN_MS } from '../domain/telemetry-tiers';

const socketList = z
  .string()
  .regex(/^\d{1,3}(,\d{1,3})*$/, 'List socket numbers separated by commas, e.g. 0,3,7')
  .transform((s) => Array.from(new Set(s.split(',').map(Number))))
  .refine((a) => a.every((n) => n >= 0 && n <= 255), 'Socket numbers run from 0 to 255')
  .refine((a) => a.length <= CHART_MAX_SOCKETS, `At most ${CHART_MAX_SOCKETS} sockets per chart`);

export const floorChartQuerySchema = z
  .object({
    from: z.iso.datetime({ offset: true }).optional(),
    to: z.iso.datetime({ offset: true }).optional(),
    points: z.coerce.number().int().min(2).max(CHART_MAX_POINTS).default(300),
    /** Sockets to plot; default the three hottest in the newest message. */
    sockets: socketList.optional(),
  })
  .superRefine((q, ctx) => {
    if (q.from && q.to) {
      const span = Date.parse(q.to) - Date.parse(q.from);
      if (!(span > 0)) ctx.addIssue({ code: 'custom', path: ['to'], message: '"to" must be after "from"' });
      else if (span > CHART_MAX_SPAN_MS) ctx.addIssue({ code: 'custom', path: ['from'], message: 'At most 366 days (a year) per chart' });
    }
  });
export type FloorChartQuery = z.infer<typeof floorChartQuerySchema>;

export interface ChartPoint {
  /** Bucket centre, ISO. */
  t: string;
  avg: number;
  min: number;
  max: number;
}

export interface FloorChart {
  from: string;
  to: string;
  /** The tier the chart was read from: 'raw' = every sample, 'minute' / 'hour' = per-minute / hourly rollups (shared/domain/telemetry-tiers.ts). */
  source: TelemetryTier;
  /** A raw chart past the raw window, read from the messages kept around trips, alarms and read points (telemetry_kept). */
  keptRaw: boolean;
  bucketMs: number;
  chamber: ChartPoint[];
  sockets: Array<{ socket: number; points: ChartPoint[] }>;
  /** Steps of read-point holds and ends of stress in the window (shared/holds): cooling under bias, bias off, … */
  holdSteps: Array<{ t: string; runCode: string; step: HoldPhase }>;
}

/** Server-sent events on GET /api/floor/stream. */
/** `end`: the server closed the stream because its session ended (reason: 'signed out' | 'session ended'). */
export type FloorStreamEvent = { type: 'tile'; tile: FloorTile } | { type: 'heartbeat'; at: string } | { type: 'end'; reason: string };
