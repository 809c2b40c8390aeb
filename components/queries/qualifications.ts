/** Qualifications: templates, the list, one matrix, and the engineer's changes to its cells. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CreateQualificationInput,
  ExternalResultInput,
  QualCellDrift,
  QualificationDetail,
  QualificationSummary,
  QualTemplateView,
  UpdateCellInput,
  WaiveCellInput,
  WithdrawCellInput,
} from '@/shared/schemas/qualifications';
import { api } from './api';

const keys = {
  all: ['qualifications'] as const,
  templates: ['qualifications', 'templates'] as const,
  list: ['qualifications', 'list'] as const,
  one: (id: string) => ['qualifications', 'one', id] as const,
  drift: (id: string, cellId: string) => ['qualifications', 'one', id, 'drift', cellId] as const,
};

export const qualificationReportUrl = (id: string, ext: 'pdf' | 'csv') => `/api/qualifications/${encodeURIComponent(id)}/report.${ext}`;

export function useQualTemplates() {
  return useQuery({
    queryKey: keys.templates,
    queryFn: ({ signal }) => api<{ items: QualTemplateView[] }>('/api/qualifications/templates', { signal }).then((r) => r.items),
    staleTime: 10 * 60_000,
  });
}

export function useQualifications() {
  return useQuery({
    queryKey: keys.list,
    queryFn: ({ signal }) => api<{ items: QualificationSummary[] }>('/api/qualifications', { signal }).then((r) => r.items),
  });
}

export function useQualification(id: string | undefined) {
  return useQuery({
    queryKey: keys.one(id ?? ''),
    queryFn: ({ signal }) => api<QualificationDetail>(`/api/qualifications/${encodeURIComponent(id ?? '')}`, { signal }),
    enabled: !!id,
    refetchInterval: 30_000,
  });
}

export function useCreateQualification() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateQualificationInput) => api<QualificationDetail>('/api/qualifications', { method: 'POST', body: input }),
    onSuccess: (d) => {
      qc.setQueryData(keys.one(d.id), d);
      return qc.invalidateQueries({ queryKey: keys.list });
    },
  });
}

type CellChange =
  | { kind: 'update'; cellId: string; body: UpdateCellInput }
  | { kind: 'waiver'; cellId: string; body: WaiveCellInput }
  | { kind: 'external'; cellId: string; body: ExternalResultInput }
  | { kind: 'withdraw'; cellId: string; body: WithdrawCellInput };

export function useChangeCell(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (c: CellChange) => {
      const base = `/api/qualifications/${encodeURIComponent(id)}/cells/${encodeURIComponent(c.cellId)}`;
      if (c.kind === 'update') return api<QualificationDetail>(base, { method: 'PATCH', body: c.body });
      return api<QualificationDetail>(`${base}/${c.kind}`, { method: 'POST', body: c.body });
    },
    onSuccess: (d) => {
      qc.setQueryData(keys.one(id), d);
      return qc.invalidateQueries({ queryKey: keys.list });
    },
  });
}

/** A cell's drift (the runs its verdict judged, this lot's devices), for the lot chart; fetched when the cell's chart is opened. */
export function useCellDrift(id: string, cellId: string | null) {
  return useQuery({
    queryKey: keys.drift(id, cellId ?? ''),
    queryFn: ({ signal }) =>
      api<QualCellDrift>(`/api/qualifications/${encodeURIComponent(id)}/cells/${encodeURIComponent(cellId ?? '')}/drift`, { signal }),
    enabled: !!cellId,
  });
}
