import type { ReactNode } from 'react';
import type { UseQueryResult } from '@tanstack/react-query';
import { ErrorNotice } from './error-notice';
import { Loading } from './loading';

/** Render a query's three states the same way everywhere: loading, a retryable error, the data. */
export function QueryView<T>({ query, loadingLabel, children }: { query: UseQueryResult<T>; loadingLabel?: string; children: (data: T) => ReactNode }) {
  if (query.isPending) return <Loading label={loadingLabel} />;
  if (query.isError) return <ErrorNotice error={query.error} onRetry={() => void query.refetch()} />;
  return <>{children(query.data)}</>;
}
