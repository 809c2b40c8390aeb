import { useQuery } from '@tanstack/react-query';
import type { DeviceHistoryView } from '@/shared/schemas/device-history';
import { api } from './api';

/** One device's whole history (GET /api/devices/:id/history); fresh for 30 s. */
export function useDeviceFullHistory(id: string | undefined) {
  return useQuery({
    queryKey: ['devices', 'history', id ?? ''] as const,
    queryFn: ({ signal }) => api<DeviceHistoryView>(`/api/devices/${encodeURIComponent(id!)}/history`, { signal }),
    enabled: !!id,
    staleTime: 30_000,
  });
}
