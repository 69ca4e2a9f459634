import type { QueryClient } from '@tanstack/react-query';
import { entriesQueryKey } from '../../register/api/get-entries';
import { groupsQueryKey } from './get-groups';

/** Groups name entries' group column: both lists move together. */
export function invalidateGroups(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: groupsQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: entriesQueryKey(slug) });
}
