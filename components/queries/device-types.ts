import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { DeviceType, DeviceTypeInput, DeviceTypePatch, DeviceTypeSummary } from '@/shared/schemas/devices';
import { api } from './api';

/** Query keys for device types, lots and plans (kept here so these screens own their cache layout). */
export const catalogKeys = {
  deviceTypes: {
    all: ['device-types'] as const,
    list: () => ['device-types', 'list'] as const,
    one: (id: string) => ['device-types', 'one', id] as const,
  },
  lots: {
    all: ['lots'] as const,
    list: (f: { deviceTypeId?: string; q?: string }) => ['lots', 'list', f.deviceTypeId ?? '', f.q ?? ''] as const,
    one: (id: string) => ['lots', 'one', id] as const,
  },
  plans: {
    all: ['plans'] as const,
    list: (f: { kind?: string; deviceTypeId?: string }) => ['plans', 'list', f.kind ?? '', f.deviceTypeId ?? ''] as const,
    one: (id: string) => ['plans', 'one', id] as const,
    templates: (deviceTypeId?: string) => ['plans', 'templates', deviceTypeId ?? ''] as const,
    check: (body: string) => ['plans', 'check', body] as const,
  },
};

/** Ratings change rarely; a minute of freshness avoids refetching on every screen change. */
export const CATALOG_STALE_MS = 60_000;

export function useDeviceTypes() {
  return useQuery({
    queryKey: catalogKeys.deviceTypes.list(),
    queryFn: ({ signal }) => api<{ items: DeviceTypeSummary[] }>('/api/device-types', { signal }).then((r) => r.items),
    staleTime: CATALOG_STALE_MS,
  });
}

export function useDeviceType(id: string | undefined) {
  return useQuery({
    queryKey: catalogKeys.deviceTypes.one(id ?? ''),
    queryFn: ({ signal }) => api<DeviceType>(`/api/device-types/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    staleTime: CATALOG_STALE_MS,
  });
}

export function useCreateDeviceType() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: DeviceTypeInput) => api<DeviceType>('/api/device-types', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: catalogKeys.deviceTypes.all }),
  });
}

export function useUpdateDeviceType() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: DeviceTypePatch }) =>
      api<DeviceType>(`/api/device-types/${encodeURIComponent(id)}`, { method: 'PATCH', body: patch }),
    onSuccess: (d) => {
      qc.setQueryData(catalogKeys.deviceTypes.one(d.id), d);
      return qc.invalidateQueries({ queryKey: catalogKeys.deviceTypes.all });
    },
  });
}
