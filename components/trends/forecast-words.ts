/** The forecast's words on screens: a chance as a percentage, and where it stands. */
import { FORECAST_CERTAINTY } from '@/shared/forecast/rules';
import type { ForecastBrief } from '@/shared/schemas/forecast';
import { hours } from './format';

/** 0.034 → "3 %"; below 1 % and above 99 % say so rather than round to a certainty the simulation cannot give. */
export function chance(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '—';
  if (p === 0 || p === 1) return `${p * 100} %`;
  if (p < 0.01) return 'below 1 %';
  if (p > 0.99) return 'above 99 %';
  return `${Math.round(p * 100)} %`;
}

/** One line for a lot's forecast: "12 % chance of passing (500 h)", "Final: passes", "Not enough data yet". */
export function forecastLine(f: ForecastBrief | undefined): string {
  if (!f) return '—';
  if (f.state === 'final') return f.pPass === 1 ? 'Final: within accept number' : 'Final: too many failures';
  if (f.pPass === null) return f.state === 'no-drift-data' ? 'No drift readings' : 'Not enough data yet';
  return `${chance(f.pPass)}${f.asOfH !== null ? ` at ${hours(f.asOfH)}` : ''}`;
}

export const CERTAINTY_WORDS = `certain enough means a chance of passing of at least ${Math.round(FORECAST_CERTAINTY * 100)} % or at most ${Math.round((1 - FORECAST_CERTAINTY) * 100)} %`;
