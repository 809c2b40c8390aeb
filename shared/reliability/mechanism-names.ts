/**
 * The failure mechanisms' names and how their model parameters are written, with no statistics
 * library behind them: screens import this (shared/reliability/mechanisms.ts holds the models).
 */
import type { PlanKind } from '../domain/stress';

export type StressMechanism = 'temperature' | 'humidity' | 'cycling';
export const STRESS_MECHANISMS: readonly StressMechanism[] = ['temperature', 'humidity', 'cycling'];

/** HTRB and powered life accelerate thermally activated mechanisms; THB corrosion by humidity; IOL fatigue by cycling. */
export const MECHANISM_OF_KIND: Record<PlanKind, StressMechanism> = {
  htrb: 'temperature',
  hotl: 'temperature',
  thb: 'humidity',
  iol: 'cycling',
};

export const MECHANISM_LABEL: Record<StressMechanism, string> = {
  temperature: 'Temperature (Arrhenius)',
  humidity: 'Humidity (Peck)',
  cycling: 'Power cycling (Coffin–Manson)',
};

/** One model parameter as shown beside a FIT and written into the exports. */
export interface ModelParameter {
  name: string;
  value: number;
  unit: string;
  /** Where the value comes from: the plan, the telemetry, or the product's stated assumption. */
  source: string;
}

/** The model parameters in words, as the lot screen and the exports print them: "Ea 0.7 eV (plan), n 2.66 (assumed, from memory)". */
export function describeParameters(parameters: readonly ModelParameter[]): string {
  return parameters.map((p) => `${p.name} ${+p.value.toPrecision(4)}${p.unit ? ` ${p.unit}` : ''} (${p.source})`).join(', ');
}
