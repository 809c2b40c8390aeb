/**
 * Alarms: the list (polled while shown — alarms must not wait for a reload), one alarm, the floor
 * counts, and acknowledging with a note.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AcknowledgeAlarmInput, Alarm, AlarmCounts, AlarmList } from '@/shared/schemas/alarms';
import { api } from './api';

export const alarmKeys = {
  all: ['alarms'] as const,
  list: (q: AlarmListParams) => ['alarms', 'list', q] as const,
  one: (id: string) => ['alarms', 'one', id] as const,
  counts: () => ['alarms', 'counts'] as const,
};

/** Alarm screens refetch this often while shown. */
export const ALARM_POLL_MS = 5_000;

export interface AlarmListParams {
  status?: 'open' | 'acknowledged' | 'all';
  rigId?: string;
  runId?: string;
  severity?: 'critical' | 'warning' | 'info';
  limit?: number;
  offset?: number;
}

export function alarmQueryString(q: AlarmListParams): string {
  const p = Object.entries(q)
    .filter(([, v]) => v !== undefined && v !== '')
    .map(([k, v]) => `${encodeURIComponent(k)}=${encodeURIComponent(String(v))}`);
  return p.length ? `?${p.join('&')}` : '';
}

export function useAlarms(q: AlarmListParams) {
  return useQuery({
    queryKey: alarmKeys.list(q),
    queryFn: ({ signal }) => api<AlarmList>(`/api/alarms${alarmQueryString(q)}`, { signal }),
    staleTime: 0,
    refetchInterval: ALARM_POLL_MS,
  });
}

export function useAlarm(id: string | undefined) {
  return useQuery({
    queryKey: alarmKeys.one(id ?? ''),
    queryFn: ({ signal }) => api<Alarm>(`/api/alarms/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    staleTime: 0,
  });
}

export function useAlarmCounts(enabled = true) {
  return useQuery({
    queryKey: alarmKeys.counts(),
    queryFn: ({ signal }) => api<AlarmCounts>('/api/alarms/counts', { signal }),
    // The badge mounts in the tabs and the side rail, and again as a page loads: a count a few seconds
    // old is reused rather than asked for again; the poll and the alarm events keep it fresh.
    staleTime: 5_000,
    refetchInterval: ALARM_POLL_MS,
    enabled,
  });
}

export function useAcknowledgeAlarm() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id: string; body: AcknowledgeAlarmInput }) =>
      api<Alarm>(`/api/alarms/${encodeURIComponent(id)}/acknowledge`, { method: 'POST', body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: alarmKeys.all }),
  });
}
