/** The signed-in person's notifications (the bell in the shell). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { AppNotification, NotificationList } from '@/shared/schemas/alarms';
import { api } from './api';

export const notificationKeys = {
  all: ['notifications'] as const,
  list: (unreadOnly: boolean) => ['notifications', 'list', unreadOnly] as const,
};

/** The bell checks this often. */
export const NOTIFICATION_POLL_MS = 15_000;

export function useNotifications(unreadOnly = false, enabled = true) {
  return useQuery({
    queryKey: notificationKeys.list(unreadOnly),
    queryFn: ({ signal }) => api<NotificationList>(`/api/notifications${unreadOnly ? '?unread=true' : ''}`, { signal }),
    // A second bell mounting (the header re-renders as a page loads) reuses a list a few seconds old
    // instead of asking again; the poll keeps it fresh.
    staleTime: 5_000,
    refetchInterval: NOTIFICATION_POLL_MS,
    enabled,
  });
}

export function useMarkNotificationRead() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api<AppNotification>(`/api/notifications/${encodeURIComponent(id)}/read`, { method: 'POST' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: notificationKeys.all }),
  });
}

export function useMarkAllNotificationsRead() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api<{ marked: number }>('/api/notifications/read-all', { method: 'POST' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: notificationKeys.all }),
  });
}
