/**
 * The verdict forecast (issue #25 item 1):
 *
 *   GET /api/analytics/lots/:lotId/forecast   the lot's chance of passing, coming read points, history
 *   GET /api/forecast/backtest                calibration and lead time on finished lots (demo + generated)
 *   GET /api/forecast/alert                   the chance of passing below which engineers are told
 *   PUT /api/forecast/alert                   { below, reason } (engineers; audited)
 *   GET /api/forecast/alert/mine              the signed-in engineer's own level (or the lab's, or off)
 *   PUT /api/forecast/alert/mine              { mode: 'lab' } | { mode: 'off' } | { mode: 'own', below } (audited)
 */
import { z } from 'zod';
import { FORECAST_ALERT_MAX, FORECAST_ALERT_MIN } from '../forecast/rules';
import type { BacktestResult } from '../forecast/backtest';
import type { PlanForecastHistory } from '../forecast/history';

const LEVEL_WORDS = `Chance of passing: enter a number between ${FORECAST_ALERT_MIN} and ${FORECAST_ALERT_MAX}`;

/** An alert level, the lab's or an engineer's own: a chance of passing as a fraction. */
export const alertLevelSchema = z
  .number({ error: LEVEL_WORDS })
  .finite(LEVEL_WORDS)
  .min(FORECAST_ALERT_MIN, `Chance of passing: at least ${FORECAST_ALERT_MIN}`)
  .max(FORECAST_ALERT_MAX, `Chance of passing: at most ${FORECAST_ALERT_MAX}`);

export const forecastAlertSchema = z
  .object({
    below: alertLevelSchema,
    reason: z.string({ message: 'Say why the threshold changes' }).trim().min(3, 'Say why the threshold changes').max(200),
  })
  .strict();
export type ForecastAlertInput = z.infer<typeof forecastAlertSchema>;

/** An engineer's own alert: follow the lab's level, off, or a level of their own. */
export const myForecastAlertSchema = z.discriminatedUnion(
  'mode',
  [
    z.object({ mode: z.literal('lab') }).strict(),
    z.object({ mode: z.literal('off') }).strict(),
    z.object({ mode: z.literal('own'), below: alertLevelSchema }).strict(),
  ],
  { error: "Alert: choose 'lab' (the lab's level), 'own' (with a level) or 'off'" },
);
export type MyForecastAlertInput = z.infer<typeof myForecastAlertSchema>;

export interface MyForecastAlert {
  mode: 'lab' | 'own' | 'off';
  /** The engineer's own level (mode 'own'), else null. */
  below: number | null;
  /** The lab's level (the default). */
  labBelow: number;
  /** Whether read-point notices are on: the lab's level reaches an engineer only then. */
  notifyReadPoints: boolean;
  /** The level this engineer is told at now; null = not told. */
  effective: number | null;
  updatedAt: string | null;
}

export interface ForecastAlertSetting {
  /** Engineers are told when a lot's chance of passing falls below this after a read-point upload. */
  below: number;
  updatedAt: string | null;
  updatedByName: string | null;
}

/** The forecast in a list row (manager's trends). */
export interface ForecastBrief {
  /** Chance the lot passes (every plan's failures within its accept number); null when it cannot be told yet. */
  pPass: number | null;
  certain: 'pass' | 'fail' | null;
  /** 'final' once every read point is in; 'forecast'; or why there is no number. */
  state: PlanForecastHistory['current']['state'];
  asOfH: number | null;
}

export interface LotForecast extends ForecastBrief {
  lotId: string;
  lotCode: string;
  /** The level at which a forecast counts as certain (FORECAST_CERTAINTY). */
  certaintyLevel: number;
  plans: PlanForecastHistory[];
  method: string;
  caution: string;
}

export interface BacktestView extends BacktestResult {
  /** Finished lots from the database and generated lots (seeded, known outcome) that went in. */
  sources: { databaseLots: number; generatedLots: number; simulations: number };
  method: string;
}
