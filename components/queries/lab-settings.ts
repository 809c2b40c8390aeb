import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { LabSettings, UpdateLabSettingsInput } from '@/shared/schemas/lab-settings';
import { api } from './api';
import { STALE } from './keys';

export const labSettingsKeys = { all: ['lab-settings'] as const };

/** The lab's hold temperatures (bias off, safe to open): every signed-in role reads them. */
export function useLabSettings() {
  return useQuery({
    queryKey: labSettingsKeys.all,
    queryFn: ({ signal }) => api<LabSettings>('/api/lab-settings', { signal }),
    staleTime: STALE.adminList,
  });
}

export function useUpdateLabSettings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: UpdateLabSettingsInput) => api<LabSettings>('/api/lab-settings', { method: 'PUT', body: input }),
    onSuccess: (s) => qc.setQueryData(labSettingsKeys.all, s),
  });
}
