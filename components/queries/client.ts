import { MutationCache, QueryCache, QueryClient } from '@tanstack/react-query';
import { isApiError, isUnauthenticated } from './api';

/**
 * Queries and mutations that expect a 401 as an ordinary answer (sign-in with a wrong password,
 * "am I signed in?") set `meta: { expectUnauthenticated: true }`; any other 401 ends the session.
 */
declare module '@tanstack/react-query' {
  interface Register {
    queryMeta: { expectUnauthenticated?: boolean };
    mutationMeta: { expectUnauthenticated?: boolean };
  }
}

export interface ClientOptions {
  /** Called once per burst of 401s from requests that did not expect one. */
  onSessionEnded?: (client: QueryClient) => void;
}

export function createQueryClient({ onSessionEnded }: ClientOptions = {}): QueryClient {
  let ending = false;
  const handle = (error: unknown, meta: { expectUnauthenticated?: boolean } | undefined) => {
    if (!isUnauthenticated(error) || meta?.expectUnauthenticated || !onSessionEnded || ending) return;
    ending = true;
    onSessionEnded(client);
    setTimeout(() => (ending = false), 1000);
  };
  const client: QueryClient = new QueryClient({
    queryCache: new QueryCache({ onError: (error, query) => handle(error, query.meta) }),
    mutationCache: new MutationCache({ onError: (error, _v, _c, mutation) => handle(error, mutation.meta) }),
    defaultOptions: {
      queries: {
        // Client errors (4xx) will not improve on retry; network blips and 5xx get two more tries.
        retry: (count, error) => (isApiError(error) && error.status >= 400 && error.status < 500 ? false : count < 2),
        refetchOnWindowFocus: true,
      },
      mutations: { retry: false },
    },
  });
  return client;
}
