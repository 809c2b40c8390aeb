/** Evidence of a run: read-point coverage, dispositions, confirmation of flagged readings. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  ConfirmReadingInput,
  Disposition,
  DispositionInput,
  EvidenceReading,
  RunCoverage,
  WithdrawDispositionInput,
} from '@/shared/schemas/evidence';
import { api } from './api';
import { measurementKeys } from './measurements';

/** Under the measurements key, so an upload or manual entry refreshes the coverage too. */
export const evidenceKeys = {
  all: ['measurements', 'evidence'] as const,
  coverage: (runId: string) => ['measurements', 'evidence', 'coverage', runId] as const,
};

const STALE_MS = 15_000;

export function useRunCoverage(runId: string | undefined) {
  return useQuery({
    queryKey: evidenceKeys.coverage(runId ?? ''),
    queryFn: ({ signal }) => api<RunCoverage>(`/api/evidence/runs/${encodeURIComponent(runId!)}/coverage`, { signal }),
    enabled: !!runId,
    staleTime: STALE_MS,
  });
}

export function useRecordDisposition(runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: DispositionInput) =>
      api<Disposition>(`/api/evidence/runs/${encodeURIComponent(runId)}/dispositions`, { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: measurementKeys.all }),
  });
}

export function useConfirmReading() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { id: string } & ConfirmReadingInput) =>
      api<EvidenceReading>(`/api/evidence/measurements/${encodeURIComponent(v.id)}/confirm`, {
        method: 'POST',
        body: { reason: v.reason },
      }),
    onSuccess: () => qc.invalidateQueries({ queryKey: measurementKeys.all }),
  });
}

export function useWithdrawDisposition() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { id: string } & WithdrawDispositionInput) =>
      api<RunCoverage>(`/api/evidence/dispositions/${encodeURIComponent(v.id)}/withdraw`, { method: 'POST', body: { reason: v.reason } }),
    onSuccess: () => qc.invalidateQueries({ queryKey: measurementKeys.all }),
  });
}
