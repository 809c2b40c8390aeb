/**
 * Which sockets a rig's chart shows when nobody chose: the `n` with the highest mean case
 * temperature over the shown window's whole minutes, compared to the nearest degree (sockets of
 * one oven differ by tenths, and tenths wander between loads), ties to the lower socket number,
 * sockets without a reading never. Returned in socket order, so each keeps its line style.
 * (Before, the newest message alone chose, and the choice changed with every sample.)
 */
export const DEFAULT_PLOTTED_SOCKETS = 3;
/** Means closer than this compare equal (1 K: about a thermocouple's standard tolerance, IEC 60584-1 class 1 ±1.5 °C — from memory). */
export const HOTTEST_RESOLUTION_K = 1;

/** Said under the chart so the reader knows why these sockets. */
export const HOTTEST_RULE_TEXT =
  'the three sockets with the highest mean case temperature over the shown period (ties: lower socket number)';

export function hottestByMean(rows: ReadonlyArray<{ socket: number; meanC: number | null }>, n = DEFAULT_PLOTTED_SOCKETS): number[] {
  return rows
    .filter((r): r is { socket: number; meanC: number } => r.meanC !== null && Number.isFinite(r.meanC))
    .map((r) => ({ socket: r.socket, level: Math.round(r.meanC / HOTTEST_RESOLUTION_K) }))
    .sort((a, b) => b.level - a.level || a.socket - b.socket)
    .slice(0, n)
    .map((r) => r.socket)
    .sort((a, b) => a - b);
}
