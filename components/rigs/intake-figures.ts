/**
 * The telemetry intake's stored counters as labelled figures for people: counts with thousands
 * separators, the per-minute summary watermark (an epoch in ms in system_counters) as a date, and
 * any counter the screen does not know by a name made of its words — never a raw key or epoch.
 */
import { formatDateTime } from '@/components/common/format';
import { grouped } from '@/shared/domain/format';

export interface IntakeFigure {
  key: string;
  label: string;
  value: string;
  kind: 'count' | 'time';
  /** A count that means trouble when above zero. */
  alert: boolean;
}

const COUNT_LABEL: Record<string, string> = {
  ingest_messages: 'Messages stored',
  ingest_samples: 'Socket readings stored',
  ingest_duplicates: 'Re-sent duplicates (stored once)',
  ingest_rejected: 'Messages refused',
  ingest_dropped: 'Turned away (buffer full)',
  ingest_seq_conflicts: 'Reused sequence numbers',
  ingest_batches: 'Database transactions',
  ingest_status_messages: 'Status messages',
};
const TIME_LABEL: Record<string, string> = {
  rollups_flushed_at_ms: 'Per-minute summaries written up to',
};
const ALERT = new Set(['ingest_dropped', 'ingest_seq_conflicts']);

/** "ingest_status_messages" → "Status messages"; "last_sweep_at_ms" → "Last sweep". */
export function counterWords(key: string): string {
  const words = key
    .replace(/^ingest_/, '')
    .replace(/_at_ms$|_ms$/, '')
    .split('_')
    .filter(Boolean)
    .join(' ');
  return words ? words[0]!.toUpperCase() + words.slice(1) : key;
}

export function intakeFigures(counters: Record<string, number>): IntakeFigure[] {
  return Object.entries(counters).map(([key, n]) => {
    const isTime = key in TIME_LABEL || key.endsWith('_at_ms');
    if (isTime) {
      return {
        key,
        kind: 'time',
        label: TIME_LABEL[key] ?? counterWords(key),
        value: n > 0 ? formatDateTime(new Date(n).toISOString()) : 'Not yet',
        alert: false,
      };
    }
    return { key, kind: 'count', label: COUNT_LABEL[key] ?? counterWords(key), value: grouped(n), alert: ALERT.has(key) && n > 0 };
  });
}
