/** A socket's identified thermal path (GET /api/thermal/rigs/:code/sockets/:socket), refreshed while shown. */
import { useQuery } from '@tanstack/react-query';
import type { SocketThermal } from '@/shared/schemas/thermal';
import { api } from './api';
import { STALE } from './keys';

/** Identifications come every few samples: refetch the open socket's every 10 s. */
export const THERMAL_REFRESH_MS = 10_000;

export const thermalKeys = {
  socket: (code: string, socket: number) => ['thermal', code, socket] as const,
};

export function useSocketThermal(code: string, socket: number | null) {
  return useQuery({
    queryKey: thermalKeys.socket(code, socket ?? -1),
    queryFn: ({ signal }) => api<SocketThermal>(`/api/thermal/rigs/${encodeURIComponent(code)}/sockets/${socket}`, { signal }),
    staleTime: STALE.live,
    refetchInterval: THERMAL_REFRESH_MS,
    enabled: !!code && socket !== null,
  });
}
