import { QueryClient } from '@tanstack/react-query';
import { isApiRequestError } from './api-client';

/** Retry only failures a retry could fix: network errors and 5xx, at most twice. */
function shouldRetry(failureCount: number, error: unknown): boolean {
  if (!isApiRequestError(error)) return false;
  return (error.isNetwork || error.status >= 500) && failureCount < 2;
}

export function createQueryClient(): QueryClient {
  return new QueryClient({
    defaultOptions: {
      queries: { retry: shouldRetry, staleTime: 30_000, refetchOnWindowFocus: false },
      mutations: { retry: false },
    },
  });
}
