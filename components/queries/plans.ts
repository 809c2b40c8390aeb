import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import type { PlanCheckResult, PlanDetail, PlanInput, PlanKind, PlanSummary, PlanTemplate } from '@/shared/schemas/plans';
import { api } from './api';
import { catalogKeys } from './device-types';

export function usePlans(filter: { kind?: PlanKind; deviceTypeId?: string } = {}) {
  const qs = new URLSearchParams();
  if (filter.kind) qs.set('kind', filter.kind);
  if (filter.deviceTypeId) qs.set('deviceTypeId', filter.deviceTypeId);
  return useQuery({
    queryKey: catalogKeys.plans.list(filter),
    queryFn: ({ signal }) => api<{ items: PlanSummary[] }>(`/api/plans${qs.size ? `?${qs}` : ''}`, { signal }).then((r) => r.items),
    staleTime: 30_000,
  });
}

export function usePlan(id: string | undefined) {
  return useQuery({
    queryKey: catalogKeys.plans.one(id ?? ''),
    queryFn: ({ signal }) => api<PlanDetail>(`/api/plans/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    staleTime: 30_000,
  });
}

export function usePlanTemplates(deviceTypeId: string | undefined) {
  return useQuery({
    queryKey: catalogKeys.plans.templates(deviceTypeId),
    queryFn: ({ signal }) =>
      api<{ items: PlanTemplate[] }>(`/api/plans/templates${deviceTypeId ? `?deviceTypeId=${encodeURIComponent(deviceTypeId)}` : ''}`, {
        signal,
      }).then((r) => r.items),
    staleTime: 5 * 60_000,
  });
}

/** Waits until `value` has stopped changing for `ms`. */
export function useDebounced<T>(value: T, ms: number): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setV(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return v;
}

/** How long the form must rest before the live check runs. */
export const LIVE_CHECK_DEBOUNCE_MS = 400;

/**
 * The live plan check: POST /api/plans/check for the plan body the form currently holds, debounced.
 * `body` is null while the form does not yet make a complete plan (nothing is sent then).
 */
export function useLivePlanCheck(body: PlanInput | null) {
  const serial = body ? JSON.stringify(body) : '';
  const debounced = useDebounced(serial, LIVE_CHECK_DEBOUNCE_MS);
  const q = useQuery({
    queryKey: catalogKeys.plans.check(debounced),
    queryFn: ({ signal }) => api<PlanCheckResult>('/api/plans/check', { method: 'POST', body: JSON.parse(debounced), signal }),
    enabled: debounced !== '',
    placeholderData: keepPreviousData,
    staleTime: 5 * 60_000,
  });
  return { ...q, pending: serial !== debounced || q.isFetching };
}

export function useCreatePlan() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: PlanInput) => api<PlanDetail>('/api/plans', { method: 'POST', body: input }),
    onSuccess: () =>
      Promise.all([
        qc.invalidateQueries({ queryKey: catalogKeys.plans.all }),
        qc.invalidateQueries({ queryKey: catalogKeys.deviceTypes.all }),
      ]),
  });
}

export function useCreatePlanVersion(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: PlanInput) => api<PlanDetail>(`/api/plans/${encodeURIComponent(id)}/versions`, { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: catalogKeys.plans.all }),
  });
}
