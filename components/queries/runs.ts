/** Runs: list, detail, timeline, proposals, booking, socket loading and the floor actions. */
import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  BookRunInput,
  BookSampleInput,
  CalendarApplyInput,
  CalendarApplyResult,
  CalendarProposal,
  ProposalInput,
  ProposalResult,
  Run,
  RunAction,
  RunDetail,
  SampleBooking,
  SocketFlag,
  SocketLoadResult,
  StartPermit,
  Timeline,
} from '@/shared/schemas/runs';
import { api, ApiError } from './api';

export const runKeys = {
  all: ['runs'] as const,
  list: (f: { open?: boolean; rigId?: string }) => ['runs', 'list', f.open ? 'open' : 'all', f.rigId ?? 'every rig'] as const,
  one: (id: string) => ['runs', 'one', id] as const,
  timeline: () => ['runs', 'timeline'] as const,
  permit: (id: string) => ['runs', 'permit', id] as const,
};

/** The start permit: each check Start makes and what it will ask to confirm (read when the dialog opens). */
export function useStartPermit(id: string, enabled: boolean) {
  return useQuery({
    queryKey: runKeys.permit(id),
    queryFn: ({ signal }) => api<StartPermit>(`/api/runs/${encodeURIComponent(id)}/permit`, { signal }),
    enabled,
    staleTime: 0,
  });
}

/** Live screens refresh this often (the scheduler moves runs on its own). */
export const RUN_REFRESH_MS = 3_000;

export function useRuns(filter: { open?: boolean; rigId?: string } = {}, enabled = true) {
  const q = [filter.open ? 'open=1' : '', filter.rigId ? `rigId=${encodeURIComponent(filter.rigId)}` : ''].filter(Boolean).join('&');
  return useQuery({
    queryKey: runKeys.list(filter),
    queryFn: ({ signal }) => api<{ items: Run[] }>(`/api/runs${q ? `?${q}` : ''}`, { signal }).then((r) => r.items),
    enabled,
    refetchInterval: RUN_REFRESH_MS * 2,
  });
}

export function useRun(id: string | undefined) {
  return useQuery({
    queryKey: runKeys.one(id ?? ''),
    queryFn: ({ signal }) => api<RunDetail>(`/api/runs/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    refetchInterval: RUN_REFRESH_MS,
  });
}

export function useTimeline() {
  return useQuery({
    queryKey: runKeys.timeline(),
    queryFn: ({ signal }) => api<Timeline>('/api/runs/timeline', { signal }),
    refetchInterval: RUN_REFRESH_MS * 2,
    placeholderData: keepPreviousData,
  });
}

/** The calendar ordered by priority-weighted lateness (asked for on demand; stores nothing). */
export function useCalendarProposal(enabled: boolean) {
  return useQuery({
    queryKey: ['runs', 'calendar'] as const,
    queryFn: ({ signal }) => api<CalendarProposal>('/api/runs/calendar', { signal }),
    enabled,
    staleTime: 0,
  });
}

export function useApplyCalendar() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CalendarApplyInput) => api<CalendarApplyResult>('/api/runs/calendar', { method: 'POST', body: input }),
    onSettled: () => qc.invalidateQueries({ queryKey: runKeys.all }),
  });
}

export function useProposals() {
  return useMutation({ mutationFn: (input: ProposalInput) => api<ProposalResult>('/api/runs/proposals', { method: 'POST', body: input }) });
}

export function useBookRun() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: BookRunInput) => api<RunDetail>('/api/runs', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: runKeys.all }),
  });
}

/** A sample booked across rigs (one run per rig, all or none). */
export function useBookSample() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: BookSampleInput) => api<SampleBooking>('/api/runs/samples', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: runKeys.all }),
  });
}

/** A refused socket map (422) still carries its flags; this error keeps them for the screen. */
export class SocketFlagsError extends ApiError {
  constructor(
    message: string,
    readonly flags: SocketFlag[],
  ) {
    super(422, 'unprocessable', message);
  }
}

export function useLoadSockets(runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async (input: { rowVersion: number; sockets: Record<string, string>; dryRun: boolean }) => {
      // A dry run answers 200 with the flags; storing with blocking flags answers 422 — ask for a
      // dry run first in that case so the flags reach the screen.
      try {
        return await api<SocketLoadResult>(`/api/runs/${encodeURIComponent(runId)}/sockets`, { method: 'PUT', body: input });
      } catch (e) {
        if (e instanceof ApiError && e.status === 422 && !input.dryRun) {
          const check = await api<SocketLoadResult>(`/api/runs/${encodeURIComponent(runId)}/sockets`, {
            method: 'PUT',
            body: { ...input, dryRun: true },
          });
          throw new SocketFlagsError(e.message, check.flags);
        }
        throw e;
      }
    },
    onSuccess: (res) => {
      if (res.stored) qc.setQueryData(runKeys.one(runId), res.run);
      return qc.invalidateQueries({ queryKey: runKeys.all });
    },
  });
}

export function useRunAction(runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { action: Exclude<RunAction, 'load'>; rowVersion: number; reason?: string }) =>
      api<RunDetail>(`/api/runs/${encodeURIComponent(runId)}/${v.action}`, {
        method: 'POST',
        // Start is only ever sent from its confirmation dialog (the plan's voltage and temperature shown).
        body: { rowVersion: v.rowVersion, ...(v.reason ? { reason: v.reason } : {}), ...(v.action === 'start' ? { confirm: true } : {}) },
      }),
    onSuccess: (run) => {
      qc.setQueryData(runKeys.one(runId), run);
      return qc.invalidateQueries({ queryKey: runKeys.all });
    },
    onError: () => qc.invalidateQueries({ queryKey: runKeys.one(runId) }),
  });
}
