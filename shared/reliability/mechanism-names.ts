/**
 * The failure mechanisms' names and how their model parameters are written, with no statistics
 * library behind them: screens import this (shared/reliability/mechanisms.ts holds the models).
 */
import type { PlanKind } from '../domain/stress';

export type StressMechanism = 'temperature' | 'humidity' | 'cycling' | 'thermal-cycling' | 'storage' | 'unbiased-humidity';
export const STRESS_MECHANISMS: readonly StressMechanism[] = [
  'temperature',
  'humidity',
  'cycling',
  'thermal-cycling',
  'storage',
  'unbiased-humidity',
];

/**
 * HTRB and powered life accelerate thermally activated mechanisms under bias; THB corrosion by
 * humidity under bias; IOL fatigue by power cycling (the junction's own swing). The unbiased chamber
 * kinds each get a mechanism of their own, never pooled with the biased ones: temperature cycling
 * fatigues the package by the chamber's swing (Coffin–Manson on the load's ΔT), storage bakes
 * without bias (Arrhenius at the chamber temperature; bond intermetallics rather than the field-driven
 * mechanisms HTRB ages), autoclave / unbiased HAST test the package's moisture integrity (no FIT:
 * see mechanisms.ts).
 */
export const MECHANISM_OF_KIND: Record<PlanKind, StressMechanism> = {
  htrb: 'temperature',
  hotl: 'temperature',
  thb: 'humidity',
  iol: 'cycling',
  tc: 'thermal-cycling',
  htsl: 'storage',
  ac: 'unbiased-humidity',
};

export const MECHANISM_LABEL: Record<StressMechanism, string> = {
  temperature: 'Temperature (Arrhenius)',
  humidity: 'Humidity (Peck)',
  cycling: 'Power cycling (Coffin–Manson)',
  'thermal-cycling': 'Temperature cycling (Coffin–Manson)',
  storage: 'Unbiased storage (Arrhenius)',
  'unbiased-humidity': 'Unbiased humidity (no FIT)',
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
