/** Live protection: resetting a socket's trip (POST /api/runs/:id/sockets/:socket/reset-trip). */
import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { TripResetInput, TripResetResult } from '@/shared/schemas/protection';
import { alarmKeys } from './alarms';
import { api } from './api';
import { floorKeys } from './floor';
import { runKeys } from './runs';

export function useResetTrip() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ runId, socket, body }: { runId: string; socket: number; body: TripResetInput }) =>
      api<TripResetResult>(`/api/runs/${encodeURIComponent(runId)}/sockets/${socket}/reset-trip`, { method: 'POST', body }),
    onSuccess: () =>
      Promise.all([
        qc.invalidateQueries({ queryKey: floorKeys.all }),
        qc.invalidateQueries({ queryKey: runKeys.all }),
        qc.invalidateQueries({ queryKey: alarmKeys.all }),
      ]),
  });
}
