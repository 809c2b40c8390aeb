/** Override requests (safety approvals), lot-verdict signatures and the audit log. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { OverrideDecisionInput, OverrideRequest, OverrideRequestInput, OverrideRequestState } from '@/shared/schemas/approvals';
import type { AuditChainReport, AuditPage } from '@/shared/schemas/audit';
import type { LotSignoff, SignVerdictInput } from '@/shared/schemas/signoff';
import { api } from './api';

const overrideKeys = {
  all: ['override-requests'] as const,
  list: (f: { state?: OverrideRequestState; planId?: string }) => ['override-requests', 'list', f] as const,
};
const signoffKeys = { lot: (lotId: string) => ['signoff', 'lot', lotId] as const };
const auditKeys = {
  all: ['audit'] as const,
  list: (q: Record<string, string>) => ['audit', 'list', q] as const,
};

const qs = (o: Record<string, string | undefined>) => {
  const p = new URLSearchParams();
  for (const [k, v] of Object.entries(o)) if (v) p.set(k, v);
  const s = p.toString();
  return s ? `?${s}` : '';
};

export function useOverrideRequests(filter: { state?: OverrideRequestState; planId?: string }, enabled = true) {
  return useQuery({
    queryKey: overrideKeys.list(filter),
    queryFn: ({ signal }) => api<{ items: OverrideRequest[]; canDecide: boolean }>(`/api/override-requests${qs(filter)}`, { signal }),
    enabled,
    refetchInterval: 15_000,
  });
}

export function useRequestOverride() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: OverrideRequestInput) => api<OverrideRequest>('/api/override-requests', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: overrideKeys.all }),
  });
}

export function useDecideOverride() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, decision }: { id: string; decision: OverrideDecisionInput }) =>
      api<OverrideRequest>(`/api/override-requests/${encodeURIComponent(id)}/decision`, { method: 'POST', body: decision }),
    onSuccess: () => qc.invalidateQueries({ queryKey: overrideKeys.all }),
  });
}

export function useLotSignoff(lotId: string) {
  return useQuery({
    queryKey: signoffKeys.lot(lotId),
    queryFn: ({ signal }) => api<LotSignoff>(`/api/signoff/lots/${encodeURIComponent(lotId)}`, { signal }),
  });
}

export function useSignVerdict(lotId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SignVerdictInput) =>
      api<LotSignoff>(`/api/signoff/lots/${encodeURIComponent(lotId)}`, { method: 'POST', body: input }),
    onSuccess: (data) => qc.setQueryData(signoffKeys.lot(lotId), data),
  });
}

export function auditQueryString(q: Record<string, string>): string {
  return qs(q);
}

export function useAuditLog(q: Record<string, string>) {
  return useQuery({
    queryKey: auditKeys.list(q),
    queryFn: ({ signal }) => api<AuditPage>(`/api/audit${qs(q)}`, { signal }),
  });
}

export function useAuditVerify() {
  return useMutation({ mutationFn: () => api<AuditChainReport>('/api/audit/verify') });
}
