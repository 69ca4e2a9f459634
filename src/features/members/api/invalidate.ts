import type { QueryClient } from '@tanstack/react-query';
import { queryKeys } from '../../../lib/query-keys';

/** Membership changes move the member list, the overview's member count and the analyses list. */
export function invalidateMembership(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: queryKeys.members(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.analyses, exact: true });
}
