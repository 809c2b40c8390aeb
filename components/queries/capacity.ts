/** Re-plan proposals after a rig drops out, and the lab's utilisation (managers and engineers). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ReplanList, ReplanProposal, Utilisation } from '@/shared/schemas/replan';
import { api } from './api';
import { runKeys } from './runs';

/** Proposals appear when a rig drops out: a short refetch keeps the list current. */
const REPLAN_REFETCH_MS = 10_000;

const keys = {
  replan: ['replan'] as const,
  utilisation: (weeks: number) => ['utilisation', weeks] as const,
};

export function useReplans(enabled = true) {
  return useQuery({
    queryKey: keys.replan,
    queryFn: ({ signal }) => api<ReplanList>('/api/replan?state=open', { signal }),
    enabled,
    refetchInterval: REPLAN_REFETCH_MS,
  });
}

export function useAcceptReplan() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api<ReplanProposal>(`/api/replan/${encodeURIComponent(id)}/accept`, { method: 'POST', body: {} }),
    onSettled: () => {
      void qc.invalidateQueries({ queryKey: keys.replan });
      void qc.invalidateQueries({ queryKey: runKeys.all });
    },
  });
}

export function useUtilisation(weeks: number) {
  return useQuery({
    queryKey: keys.utilisation(weeks),
    queryFn: ({ signal }) => api<Utilisation>(`/api/utilisation?weeks=${weeks}`, { signal }),
  });
}

export const utilisationCsvUrl = (weeks: number) => `/api/utilisation/export.csv?weeks=${weeks}`;
