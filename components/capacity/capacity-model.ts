/** Pure helpers of the capacity screen: chart series, delay words (tests/app/capacity.test.tsx). */
import type { ReplanProposal, Utilisation } from '@/shared/schemas/replan';

const r3 = (x: number) => Math.round(x * 1000) / 1000;

/** Per week, summed over every rig or for one. */
export function capacitySeries(data: Utilisation, rig: string | null) {
  const pick = (w: string) => data.rows.filter((r) => r.weekStart === w && (rig === null || r.rigCode === rig));
  const sum = (w: string, k: 'bookedSh' | 'stressedSh' | 'idleSh' | 'lostSh') => r3(pick(w).reduce((s, r) => s + r[k], 0));
  return {
    weeks: data.weeks,
    booked: data.weeks.map((w) => sum(w, 'bookedSh')),
    stressed: data.weeks.map((w) => sum(w, 'stressedSh')),
    idle: data.weeks.map((w) => sum(w, 'idleSh')),
    lost: data.weeks.map((w) => sum(w, 'lostSh')),
  };
}

/** "30 Nov" for a week's Monday (UTC). */
export function weekLabel(iso: string): string {
  // The week's first day (UTC) in the app's one date style (YYYY-MM-DD).
  return iso ? iso.slice(0, 10) : '';
}

/** The same day as a chart tick: month and day only (the table and the chart's description give the year). */
export function weekTick(iso: string): string {
  return iso ? iso.slice(5, 10) : '';
}

/** "2.5 h late against its due date", "on time against its booked finish", "1 h early …". */
export function delayWords(p: Pick<ReplanProposal, 'delayH' | 'delayBasis'>): string {
  const basis = p.delayBasis === 'due-date' ? 'its due date' : 'its booked finish';
  const h = Math.abs(p.delayH);
  const n = h >= 10 ? Math.round(h).toString() : String(+h.toFixed(2));
  if (h < 0.005) return `On time against ${basis}`;
  return p.delayH > 0 ? `${n} h late against ${basis}` : `${n} h early against ${basis}`;
}

/** Proposals grouped by run (the order the server gave). */
export function byRun(
  items: readonly ReplanProposal[],
): Array<{ runId: string; runCode: string; reason: string; options: ReplanProposal[] }> {
  const out = new Map<string, { runId: string; runCode: string; reason: string; options: ReplanProposal[] }>();
  for (const p of items) {
    const g = out.get(p.runId) ?? { runId: p.runId, runCode: p.runCode, reason: p.reason, options: [] };
    g.options.push(p);
    out.set(p.runId, g);
  }
  return [...out.values()].map((g) => ({
    ...g,
    options: [...g.options].sort((a, b) => a.delayH - b.delayH || a.kind.localeCompare(b.kind)),
  }));
}

/** Axis numbers that fit: 950, 12.5k, 3.2M. */
export function compact(x: number): string {
  const a = Math.abs(x);
  if (a >= 1e6) return `${+(x / 1e6).toFixed(1)}M`;
  if (a >= 1e4) return `${+(x / 1e3).toFixed(1)}k`;
  return String(+x.toFixed(1));
}
