import type { QueryClient } from '@tanstack/react-query';
import { queryKeys } from '../../../lib/query-keys';

/** Groups name entries' group column: both lists move together. */
export function invalidateGroups(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: queryKeys.groups(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
}
