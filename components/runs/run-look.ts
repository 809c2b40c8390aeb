/** How run states look on every screen: a tone (always with the state's words) and short formats. */
import type { Tone } from '@/components/theme/tokens';
import type { RunState } from '@/shared/schemas/runs';
import { formatLocalCompact } from '@/shared/domain/format';

export const RUN_STATE_TONE: Record<RunState, Tone> = {
  booked: 'idle',
  loading: 'info',
  heating: 'attention',
  stressing: 'ok',
  paused: 'attention',
  'read-hold': 'info',
  cooling: 'info',
  fault: 'danger',
  finished: 'idle',
  aborted: 'danger',
};

/** "412.5 h" — stress hours with one decimal, no trailing ".0". */
export function hours(h: number | null | undefined): string {
  if (h === null || h === undefined || !Number.isFinite(h)) return '—';
  return `${+h.toFixed(1)} h`;
}

/** Compact time for dense places: "14:05" today, "2026-03-03 14:05" otherwise (shared/domain/format.ts). */
export function shortTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return '—';
  return formatLocalCompact(d);
}

/** A pasted column of serials → socket map from `first` on; blank lines stay as empty sockets. */
export function columnToSocketMap(text: string, first: number): Record<string, string> {
  const lines = text.replace(/\r\n?/g, '\n').split('\n');
  while (lines.length && !lines[lines.length - 1].trim()) lines.pop();
  const out: Record<string, string> = {};
  lines.forEach((line, i) => {
    // A pasted spreadsheet row may carry more columns: the serial is the first cell.
    out[String(first + i)] = (line.split(/[\t,;]/)[0] ?? '').trim();
  });
  return out;
}
