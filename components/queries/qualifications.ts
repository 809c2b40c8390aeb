/** Qualifications: templates, the list, one matrix, and the engineer's changes to its cells. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CreateQualificationInput,
  ExternalResultInput,
  QualificationDetail,
  QualificationSummary,
  QualTemplateView,
  UpdateCellInput,
  WaiveCellInput,
} from '@/shared/schemas/qualifications';
import { api } from './api';

const keys = {
  all: ['qualifications'] as const,
  templates: ['qualifications', 'templates'] as const,
  list: ['qualifications', 'list'] as const,
  one: (id: string) => ['qualifications', 'one', id] as const,
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
  | { kind: 'external'; cellId: string; body: ExternalResultInput };

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
