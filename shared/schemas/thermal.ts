/**
 * A socket's identified thermal path (server/modules/thermal): the request's params and the
 * response shape the socket sheet shows.
 */
import { z } from 'zod';
import type { ThermalTrend } from '../thermal/trend';
import { rigCodeInputSchema } from './rigs';

export type { ThermalTrend };

export const thermalSocketParamSchema = z
  .object({
    code: rigCodeInputSchema,
    socket: z.coerce
      .number()
      .int('The socket is a whole number')
      .min(0, 'Sockets count from 0')
      .max(255, 'No rig has more than 256 sockets'),
  })
  .strict();
export type ThermalSocketParams = z.infer<typeof thermalSocketParamSchema>;

/** One identification as stored. */
export interface ThermalFit {
  identifiedAt: string;
  stressClockS: number;
  trigger: 'bias-on' | 'power-step' | 'periodic';
  identifiable: boolean;
  good: boolean;
  method: 'arx' | 'steady' | null;
  thetaCPerW: number | null;
  tauS: number | null;
  tauNote: string | null;
  offsetC: number | null;
  offsetBasis: 'bias-off' | 'chamber' | 'fitted';
  r2: number | null;
  rmsC: number | null;
  samples: number;
  sampleIntervalS: number | null;
  meanPowerW: number;
  /** θ / the run's first good θ − 1. */
  riseFraction: number | null;
  reason: string | null;
  /** The trend rule's latest evaluation when this fit was made (shared/thermal/trend.ts), or null. */
  trend: ThermalTrend | null;
  /** The fit joined the trend's series. */
  trendPoint: boolean;
  /** The rule that raised (or refreshed) the flag with this fit. */
  flagRule: 'step' | 'trend' | null;
}

export interface SocketThermal {
  rigCode: string;
  socketIndex: number;
  runId: string | null;
  runCode: string | null;
  /** The run's first good θ (the baseline the flag compares with). */
  baselineThetaCPerW: number | null;
  /** The newest good identification, and the newest of any kind (it may be "not identifiable"). */
  latestGood: ThermalFit | null;
  latest: ThermalFit | null;
  /** Flag limit: θ above baseline × (1 + this). */
  riseLimitFraction: number;
  /** An unacknowledged or still active thermal-path alarm for this socket. */
  flagged: boolean;
  /** The rule that last raised the flag this run ('step': θ past the line; 'trend': on course to it), or null. */
  flagRule: 'step' | 'trend' | null;
  /** The trend rule's latest stored evaluation this run (null until it has TREND_MIN_FITS fits). */
  trend: ThermalTrend | null;
  /** Fits the trend needs (TREND_MIN_FITS) and how many it has. */
  trendMinFits: number;
  /** Oldest first, at most 200. */
  history: ThermalFit[];
}
