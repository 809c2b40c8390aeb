/** The mail log (admin). */
import { useQuery } from '@tanstack/react-query';
import type { MailList } from '@/shared/schemas/alarms';
import { api } from './api';

export const mailKeys = {
  all: ['mail'] as const,
  list: (status: 'all' | 'sent' | 'failed', page: number) => ['mail', 'list', status, page] as const,
};

export const MAIL_PAGE_SIZE = 50;

export function useMailLog(status: 'all' | 'sent' | 'failed', page = 0) {
  const qs = [status !== 'all' ? `status=${status}` : null, `limit=${MAIL_PAGE_SIZE}`, `offset=${page * MAIL_PAGE_SIZE}`]
    .filter(Boolean)
    .join('&');
  return useQuery({
    queryKey: mailKeys.list(status, page),
    queryFn: ({ signal }) => api<MailList>(`/api/mail?${qs}`, { signal }),
    staleTime: 10_000,
    refetchInterval: 30_000,
  });
}
