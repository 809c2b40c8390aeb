/**
 * Which sockets a rig's chart shows when nobody chose: the `n` with the highest mean case
 * temperature over the shown window, ties to the lower socket number, sockets without a reading
 * never. The same window gives the same sockets on every load (the newest message alone changed
 * them with every sample). Returned in socket order, so each keeps its line style.
 */
export const DEFAULT_PLOTTED_SOCKETS = 3;

/** Said under the chart so the reader knows why these sockets. */
export const HOTTEST_RULE_TEXT =
  'the three sockets with the highest mean case temperature over the shown period (ties: lower socket number)';

export function hottestByMean(rows: ReadonlyArray<{ socket: number; meanC: number | null }>, n = DEFAULT_PLOTTED_SOCKETS): number[] {
  return rows
    .filter((r): r is { socket: number; meanC: number } => r.meanC !== null && Number.isFinite(r.meanC))
    .sort((a, b) => b.meanC - a.meanC || a.socket - b.socket)
    .slice(0, n)
    .map((r) => r.socket)
    .sort((a, b) => a - b);
}
