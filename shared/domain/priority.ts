/**
 * A run request's priority and the weight the proposer gives it in the total weighted tardiness
 * Σ w·max(0, C − d) (shared/scheduling/tardiness.ts). Emberlot's own scale: each step doubles the
 * weight, so one urgent run late by a day counts as much as eight low-priority runs late by a day.
 * Zod-free: screens import it without zod.
 */
export const PRIORITIES = [1, 2, 3, 4] as const;
export type Priority = (typeof PRIORITIES)[number];

export const DEFAULT_PRIORITY: Priority = 2;

export const PRIORITY_LABEL: Record<Priority, string> = { 1: 'Low', 2: 'Normal', 3: 'High', 4: 'Urgent' };

/** Weight per priority (Emberlot's choice: doubling per step). */
export const PRIORITY_WEIGHT: Record<Priority, number> = { 1: 1, 2: 2, 3: 4, 4: 8 };

export function isPriority(x: unknown): x is Priority {
  return typeof x === 'number' && (PRIORITIES as readonly number[]).includes(x);
}

/** The weight of a stored priority; an unknown value counts as normal. */
export function priorityWeight(p: number): number {
  return isPriority(p) ? PRIORITY_WEIGHT[p] : PRIORITY_WEIGHT[DEFAULT_PRIORITY];
}
