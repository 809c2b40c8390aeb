import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { CreateUserInput, UpdateUserInput, User } from '@/shared/schemas/users';
import { api } from './api';
import type { Me } from './auth';
import { keys, STALE } from './keys';

/** The people list; `enabled` false for a role that may not read it (no request that would answer 403). */
export function useUsers(enabled = true) {
  return useQuery({
    queryKey: keys.users.list(),
    queryFn: ({ signal }) => api<{ items: User[] }>('/api/users', { signal }).then((r) => r.items),
    staleTime: STALE.adminList,
    enabled,
  });
}

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateUserInput) => api<User>('/api/users', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.users.all }),
  });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: UpdateUserInput }) =>
      api<User>(`/api/users/${encodeURIComponent(id)}`, { method: 'PATCH', body: patch }),
    onSuccess: (user) => {
      qc.setQueryData<User[]>(keys.users.list(), (list) => list?.map((u) => (u.id === user.id ? user : u)));
      qc.setQueryData<Me | null>(keys.me, (me) =>
        me && me.id === user.id
          ? { ...me, name: user.name, role: user.role, notifyAlarms: user.notifyAlarms, notifyReadPoints: user.notifyReadPoints }
          : me,
      );
      return qc.invalidateQueries({ queryKey: keys.users.all });
    },
  });
}
