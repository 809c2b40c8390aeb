/**
 * The verdict forecast (issue #25 item 1):
 *
 *   GET /api/analytics/lots/:lotId/forecast   the lot's chance of passing, coming read points, history
 *   GET /api/forecast/backtest                calibration and lead time on finished lots (demo + generated)
 *   GET /api/forecast/alert                   the chance of passing below which engineers are told
 *   PUT /api/forecast/alert                   { below, reason } (engineers; audited)
 */
import { z } from 'zod';
import type { BacktestResult } from '../forecast/backtest';
import type { PlanForecastHistory } from '../forecast/history';

export const forecastAlertSchema = z
  .object({
    below: z
      .number({ error: 'Chance of passing: enter a number between 0.01 and 0.99' })
      .finite('Chance of passing: enter a number between 0.01 and 0.99')
      .min(0.01, 'Chance of passing: at least 0.01')
      .max(0.99, 'Chance of passing: at most 0.99'),
    reason: z.string({ message: 'Say why the threshold changes' }).trim().min(3, 'Say why the threshold changes').max(200),
  })
  .strict();
export type ForecastAlertInput = z.infer<typeof forecastAlertSchema>;

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
