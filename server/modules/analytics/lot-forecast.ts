/**
 * A lot's verdict forecast from its analysis (shared/forecast), kept with the analysis: the part
 * cache hands out the same `Analysed` until a row it read changes, so a WeakMap on it never serves
 * a stale forecast.
 */
import {
  FORECAST_CERTAINTY,
  FORECAST_METHOD,
  certainty,
  forecastJudged,
  lotChance,
  planForecastHistory,
  type PlanForecast,
  type PlanForecastHistory,
} from '../../../shared/forecast';
import type { ForecastBrief, LotForecast } from '../../../shared/schemas/forecast';
import type { Analysed } from './part-analysis';

export const FORECAST_CAUTION =
  'A forecast, not a verdict: it extends each device’s drift so far as a straight line and predicts neither catastrophic failures nor a change of mechanism. The verdict stands on the readings; act on the lab’s own rules.';

const currents = new WeakMap<Analysed, PlanForecast[]>();
const histories = new WeakMap<Analysed, PlanForecastHistory[]>();

/** Each plan's forecast now (what the list shows). */
export function currentForecasts(a: Analysed): PlanForecast[] {
  let c = currents.get(a);
  if (!c) {
    c = a.evidence.plans.map((pe, i) => forecastJudged(pe, a.judgement.plans[i]));
    currents.set(a, c);
  }
  return c;
}

/** Each plan's forecast now and at its earlier read points (the lot page). */
export function planForecasts(a: Analysed): PlanForecastHistory[] {
  let h = histories.get(a);
  if (!h) {
    const now = currentForecasts(a);
    h = a.evidence.plans.map((pe, i) => planForecastHistory(a.evidence, pe, a.judgement.plans[i], a.peers, { current: now[i] }));
    histories.set(a, h);
  }
  return h;
}

export function briefForecast(a: Analysed): ForecastBrief {
  const plans = currentForecasts(a).map((current) => ({ current }));
  const pPass = lotChance(plans.map((p) => p.current));
  const states = plans.map((p) => p.current.state);
  const state = !plans.length
    ? 'not-enough-data'
    : states.every((s) => s === 'final')
      ? 'final'
      : pPass !== null
        ? 'forecast'
        : (states.find((s) => s !== 'final' && s !== 'forecast') ?? 'not-enough-data');
  const asOf = plans.map((p) => p.current.asOfH).filter((h): h is number => h !== null);
  return { pPass, certain: certainty(pPass), state, asOfH: asOf.length ? Math.max(...asOf) : null };
}

export function lotForecast(a: Analysed): LotForecast {
  return {
    lotId: a.core.lot.id,
    lotCode: a.core.lot.code,
    ...briefForecast(a),
    certaintyLevel: FORECAST_CERTAINTY,
    plans: planForecasts(a),
    method: FORECAST_METHOD,
    caution: FORECAST_CAUTION,
  };
}
