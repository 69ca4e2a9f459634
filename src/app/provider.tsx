import { useEffect, useState, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { onUnauthenticated } from '../lib/api-client';
import { createQueryClient } from '../lib/query-client';
import { queryKeys } from '../lib/query-keys';

/**
 * Server state lives in TanStack Query. When any request answers 401 the session is gone:
 * the cached user becomes null and the signed-in layout sends the reader to sign-in,
 * remembering where they were.
 */
export function AppProvider({ children }: { children: ReactNode }) {
  const [queryClient] = useState(createQueryClient);
  useEffect(
    () =>
      onUnauthenticated(() => {
        queryClient.setQueryData(queryKeys.me, null);
      }),
    [queryClient],
  );
  return <QueryClientProvider client={queryClient}>{children}</QueryClientProvider>;
}
