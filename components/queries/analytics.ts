import { useQuery } from '@tanstack/react-query';
import type { DeviceTypeSummary, LotDetail, LotSummary } from '@/shared/schemas/analytics';
import { api } from './api';

export const analyticsKeys = {
  all: ['analytics'] as const,
  lots: () => ['analytics', 'lots'] as const,
  lot: (id: string) => ['analytics', 'lots', id] as const,
  types: () => ['analytics', 'device-types'] as const,
  type: (id: string, ltpdPct: number, acceptNumber: number) => ['analytics', 'device-types', id, ltpdPct, acceptNumber] as const,
};

/** Analyses are recomputed on the server from every reading; a minute's staleness is fine. */
const STALE_MS = 60_000;

export function useLotSummaries() {
  return useQuery({
    queryKey: analyticsKeys.lots(),
    queryFn: ({ signal }) => api<{ items: LotSummary[] }>('/api/analytics/lots', { signal }).then((r) => r.items),
    staleTime: STALE_MS,
  });
}

export function useLotAnalysis(id: string | undefined) {
  return useQuery({
    queryKey: analyticsKeys.lot(id ?? ''),
    queryFn: ({ signal }) => api<LotDetail>(`/api/analytics/lots/${encodeURIComponent(id!)}`, { signal }),
    enabled: !!id,
    staleTime: STALE_MS,
  });
}

export function useDeviceTypeSummaries() {
  return useQuery({
    queryKey: analyticsKeys.types(),
    queryFn: ({ signal }) => api<{ items: DeviceTypeSummary[] }>('/api/analytics/device-types', { signal }).then((r) => r.items),
    staleTime: STALE_MS,
  });
}

export function useDeviceTypeSummary(id: string | undefined, q: { ltpdPct: number; acceptNumber: number }) {
  return useQuery({
    queryKey: analyticsKeys.type(id ?? '', q.ltpdPct, q.acceptNumber),
    queryFn: ({ signal }) =>
      api<DeviceTypeSummary>(`/api/analytics/device-types/${encodeURIComponent(id!)}?ltpdPct=${q.ltpdPct}&acceptNumber=${q.acceptNumber}`, {
        signal,
      }),
    enabled: !!id,
    staleTime: STALE_MS,
  });
}

/** The lot report's downloads and the certificate of conformance (server/modules/reports). */
export const lotReportUrl = (id: string, kind: 'csv' | 'pdf') => `/api/reports/lots/${encodeURIComponent(id)}/report.${kind}`;
export const certificateUrl = (id: string) => `/api/reports/lots/${encodeURIComponent(id)}/certificate.pdf`;
