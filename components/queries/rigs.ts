import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  CreateRigInput,
  MaintenanceInput,
  MaintenanceWindow,
  RejectedMessage,
  Rig,
  RigServiceRecord,
  RigWithCredentials,
  ServiceRecordInput,
  TelemetryStats,
} from '@/shared/schemas/rigs';
import { api } from './api';
import { STALE } from './keys';

export const rigKeys = {
  all: ['rigs'] as const,
  list: () => ['rigs', 'list'] as const,
  maintenance: (code: string) => ['rigs', 'maintenance', code] as const,
  service: (code: string) => ['rigs', 'service', code] as const,
  rejections: () => ['rigs', 'telemetry', 'rejections'] as const,
  stats: () => ['rigs', 'telemetry', 'stats'] as const,
};

const enc = encodeURIComponent;

export function useRigs() {
  return useQuery({
    queryKey: rigKeys.list(),
    queryFn: ({ signal }) => api<{ items: Rig[] }>('/api/rigs', { signal }).then((r) => r.items),
    staleTime: STALE.adminList,
  });
}

export function useCreateRig() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateRigInput) => api<RigWithCredentials>('/api/rigs', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: rigKeys.all }),
  });
}

export function useRotateCredentials() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (code: string) => api<RigWithCredentials>(`/api/rigs/${enc(code)}/credentials`, { method: 'POST', body: {} }),
    onSuccess: () => qc.invalidateQueries({ queryKey: rigKeys.all }),
  });
}

export function useRevokeRig() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ code, reason }: { code: string; reason: string }) =>
      api<Rig & { disconnectRequested: boolean }>(`/api/rigs/${enc(code)}/revoke`, { method: 'POST', body: { reason } }),
    onSuccess: () => qc.invalidateQueries({ queryKey: rigKeys.all }),
  });
}

export function useMaintenance(code: string | null) {
  return useQuery({
    queryKey: rigKeys.maintenance(code ?? ''),
    queryFn: ({ signal }) => api<{ items: MaintenanceWindow[] }>(`/api/rigs/${enc(code!)}/maintenance`, { signal }).then((r) => r.items),
    enabled: !!code,
    staleTime: STALE.adminList,
  });
}

export function useAddMaintenance(code: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: MaintenanceInput) => api<MaintenanceWindow>(`/api/rigs/${enc(code)}/maintenance`, { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: rigKeys.maintenance(code) }),
  });
}

export function useDeleteMaintenance(code: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api<void>(`/api/rigs/${enc(code)}/maintenance/${enc(id)}`, { method: 'DELETE' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: rigKeys.maintenance(code) }),
  });
}

export function useTelemetryStats(enabled = true) {
  return useQuery({
    queryKey: rigKeys.stats(),
    queryFn: ({ signal }) => api<TelemetryStats>('/api/telemetry/stats', { signal }),
    enabled,
    staleTime: 30_000,
  });
}

export function useRejections(enabled = true) {
  return useQuery({
    queryKey: rigKeys.rejections(),
    queryFn: ({ signal }) => api<{ items: RejectedMessage[] }>('/api/telemetry/rejections?limit=50', { signal }).then((r) => r.items),
    enabled,
    staleTime: 30_000,
  });
}

/** The calibration and interlock-test record behind a rig's start-permit dates. */
export function useServiceRecords(code: string | null) {
  return useQuery({
    queryKey: rigKeys.service(code ?? ''),
    queryFn: ({ signal }) => api<{ items: RigServiceRecord[] }>(`/api/rigs/${enc(code!)}/service-records`, { signal }).then((r) => r.items),
    enabled: !!code,
    staleTime: STALE.adminList,
  });
}

export function useAddServiceRecord(code: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ServiceRecordInput) => api<Rig>(`/api/rigs/${enc(code)}/service-records`, { method: 'POST', body: input }),
    onSuccess: () =>
      Promise.all([qc.invalidateQueries({ queryKey: rigKeys.service(code) }), qc.invalidateQueries({ queryKey: rigKeys.list() })]),
  });
}
