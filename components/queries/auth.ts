import { can, type Permission } from '@/shared/domain/permissions';
import { useMutation, useQuery, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { router, type Href } from 'expo-router';
import type { SessionUser, SignInInput } from '@/shared/schemas/auth';
import type { User } from '@/shared/schemas/users';
import { api, isUnauthenticated } from './api';
import { keys, STALE } from './keys';

/** The signed-in user. The notification flags appear when the server includes them in /me. */
export type Me = SessionUser & Partial<Pick<User, 'notifyAlarms' | 'notifyReadPoints'>>;

export const SESSION_ENDED_MESSAGE = 'Your session has ended. Sign in again.';
/** The sign-in route with the "session ended" notice. */
export const SIGN_IN_AFTER_EXPIRY = '/sign-in?ended=1' as Href;

/**
 * Whether the signed-in person may take an action (shared/domain/permissions.ts, the table the API's
 * routes read too). False while the session is loading and when nobody is signed in.
 */
export function useCan(): (action: Permission) => boolean {
  const me = useMe();
  const role = me.data?.role;
  return (action) => !!role && can(role, action);
}

/** null = nobody is signed in (the API answered 401). */
export function useMe() {
  return useQuery({
    queryKey: keys.me,
    queryFn: async ({ signal }): Promise<Me | null> => {
      try {
        const res = await api<{ user: Me }>('/api/auth/me', { signal });
        return res.user;
      } catch (e) {
        if (isUnauthenticated(e)) return null;
        throw e;
      }
    },
    staleTime: STALE.session,
    meta: { expectUnauthenticated: true },
  });
}

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SignInInput) => api<{ user: Me }>('/api/auth/sign-in', { method: 'POST', body: input }).then((r) => r.user),
    meta: { expectUnauthenticated: true },
    onSuccess: (user) => {
      // A different person may have been signed in on this device: start from clean queries.
      // (Not qc.clear(): that would also drop this mutation before its caller's onSuccess runs.)
      qc.removeQueries();
      qc.setQueryData(keys.me, user);
    },
  });
}

/** Forget everything cached for the old session, keep "nobody signed in" as the answer. */
export function forgetSession(qc: QueryClient) {
  qc.cancelQueries();
  qc.removeQueries({ predicate: (q) => q.queryKey[0] !== keys.me[0] });
  qc.setQueryData(keys.me, null);
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async () => {
      try {
        await api<void>('/api/auth/sign-out', { method: 'POST' });
      } catch (e) {
        // Already signed out on the server: the outcome the person wanted.
        if (!isUnauthenticated(e)) throw e;
      }
    },
    meta: { expectUnauthenticated: true },
    onSuccess: () => {
      forgetSession(qc);
      router.replace('/sign-in');
    },
  });
}

/** The default 401 handler wired into the QueryClient in app/_layout.tsx. */
export function endSession(qc: QueryClient) {
  const wasSignedIn = !!qc.getQueryData(keys.me);
  forgetSession(qc);
  router.replace(wasSignedIn ? SIGN_IN_AFTER_EXPIRY : '/sign-in');
}
