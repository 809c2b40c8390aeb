/** Number wording and severity helpers shared by the plan-check rules. */
import { sigFigures, withSiPrefix } from '../../domain/format';
import { WARN_FRACTION_OF_LIMIT, type FindingNumber, type Severity } from './types';

export const sig = sigFigures;
const withPrefix = (x: number, unit: string) => withSiPrefix(x, unit);
export const V = (x: number) => `${sig(x)} V`;
export const C = (x: number) => `${sig(x, 4)} °C`;
export const W = (x: number) => withPrefix(x, 'W');
export const A = (x: number) => withPrefix(x, 'A');
export const pct = (x: number) => `${sig(x * 100)} %`;

/** The finding's numbers, skipping non-finite values. */
export function numbers(entries: [string, number, string, string][]): Record<string, FindingNumber> {
  const out: Record<string, FindingNumber> = {};
  for (const [key, value, unit, label] of entries) {
    if (Number.isFinite(value)) out[key] = { value, unit, label };
  }
  return out;
}

/** block above the limit, warn at ≥ 90 % of it, ok below. */
export function againstLimit(value: number, limit: number): Severity {
  if (value > limit) return 'block';
  if (value >= WARN_FRACTION_OF_LIMIT * limit) return 'warn';
  return 'ok';
}

/** Breakdown: block above the plan's derated allowance, warn within 10 % of the rating itself. */
export function againstBreakdown(v: number, rated: number, derating: number): Severity {
  if (v > rated * derating) return 'block';
  if (v >= WARN_FRACTION_OF_LIMIT * rated) return 'warn';
  return 'ok';
}

/** The title for a severity: block / warn / ok wording. */
export const titled = (sev: Severity, block: string, warn: string, ok: string): string =>
  sev === 'block' ? block : sev === 'warn' ? warn : ok;
