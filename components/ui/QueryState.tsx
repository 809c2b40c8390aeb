import type { ReactNode } from 'react';
import type { UseQueryResult } from '@tanstack/react-query';
import { ErrorState } from './ErrorState';
import { Loading } from './Loading';

interface Props<T> {
  query: UseQueryResult<T>;
  loadingLabel: string;
  errorTitle?: string;
  loadingVariant?: 'spinner' | 'skeleton';
  /** When true for the loaded data, `empty` is shown instead of children. */
  isEmpty?: (data: T) => boolean;
  empty?: ReactNode;
  children: (data: T) => ReactNode;
}

/**
 * Loading → error (with retry) → empty → data, the same way on every screen.
 * A background refetch that fails keeps showing the data it already has.
 */
export function QueryState<T>({ query, loadingLabel, errorTitle, loadingVariant = 'skeleton', isEmpty, empty, children }: Props<T>) {
  if (query.data === undefined) {
    if (query.isError) {
      return <ErrorState error={query.error} title={errorTitle} onRetry={() => query.refetch()} retrying={query.isFetching} />;
    }
    return <Loading label={loadingLabel} variant={loadingVariant} />;
  }
  if (isEmpty?.(query.data) && empty) return <>{empty}</>;
  return <>{children(query.data)}</>;
}
