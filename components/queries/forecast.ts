import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type {
  BacktestView,
  ForecastAlertInput,
  ForecastAlertSetting,
  LotForecast,
  MyForecastAlert,
  MyForecastAlertInput,
} from '@/shared/schemas/forecast';
import { api } from './api';

export const forecastKeys = {
  lot: (id: string) => ['analytics', 'lots', id, 'forecast'] as const,
  backtest: () => ['forecast', 'backtest'] as const,
  alert: () => ['forecast', 'alert'] as const,
  mine: () => ['forecast', 'alert', 'mine'] as const,
};

/** A forecast changes only with new readings; a minute's staleness is fine (as the analyses). */
const STALE_MS = 60_000;

export function useLotForecast(id: string | undefined) {
  return useQuery({
    queryKey: forecastKeys.lot(id ?? ''),
    queryFn: ({ signal }) => api<LotForecast>(`/api/analytics/lots/${encodeURIComponent(id!)}/forecast`, { signal }),
    enabled: !!id,
    staleTime: STALE_MS,
  });
}

export function useForecastBacktest() {
  return useQuery({
    queryKey: forecastKeys.backtest(),
    queryFn: ({ signal }) => api<BacktestView>('/api/forecast/backtest', { signal }),
    staleTime: STALE_MS,
  });
}

export function useForecastAlert() {
  return useQuery({
    queryKey: forecastKeys.alert(),
    queryFn: ({ signal }) => api<ForecastAlertSetting>('/api/forecast/alert', { signal }),
    staleTime: STALE_MS,
  });
}

export function useSetForecastAlert() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ForecastAlertInput) => api<ForecastAlertSetting>('/api/forecast/alert', { method: 'PUT', body: input }),
    onSuccess: (s) => {
      qc.setQueryData(forecastKeys.alert(), s);
      // An engineer following the lab's level is told at the new one.
      void qc.invalidateQueries({ queryKey: forecastKeys.mine() });
    },
  });
}

/** The signed-in engineer's own alert level (account page). */
export function useMyForecastAlert(enabled = true) {
  return useQuery({
    queryKey: forecastKeys.mine(),
    queryFn: ({ signal }) => api<MyForecastAlert>('/api/forecast/alert/mine', { signal }),
    enabled,
    staleTime: STALE_MS,
  });
}

export function useSetMyForecastAlert() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: MyForecastAlertInput) => api<MyForecastAlert>('/api/forecast/alert/mine', { method: 'PUT', body: input }),
    onSuccess: (s) => qc.setQueryData(forecastKeys.mine(), s),
  });
}
