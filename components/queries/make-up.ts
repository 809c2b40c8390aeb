/** A run's make-up proposal (lost, excluded or tripped devices; per lot) and booking it in one step (a run per lot made up). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { MakeUpBookInput, MakeUpBooking, MakeUpView } from '@/shared/schemas/make-up';
import { api } from './api';
import { RUN_REFRESH_MS, runKeys } from './runs';

export const makeUpKeys = {
  one: (runId: string) => ['runs', 'make-up', runId] as const,
};

export function useMakeUp(runId: string) {
  return useQuery({
    queryKey: makeUpKeys.one(runId),
    queryFn: ({ signal }) => api<MakeUpView>(`/api/runs/${encodeURIComponent(runId)}/make-up`, { signal }),
    enabled: !!runId,
    refetchInterval: RUN_REFRESH_MS * 10,
  });
}

export function useBookMakeUp(runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: MakeUpBookInput) =>
      api<MakeUpBooking>(`/api/runs/${encodeURIComponent(runId)}/make-up`, { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: runKeys.all }),
  });
}
