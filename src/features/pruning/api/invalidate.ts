import type { QueryClient } from '@tanstack/react-query';
import type { PruningOverview } from '@shared/schemas/register';
import { queryKeys } from '../../../lib/query-keys';

/**
 * The rules or the pruned effects changed: keep the overview the server answered with, and refresh
 * the register and every entry (their pruning markers and histories), which its key holds.
 */
export function pruningChanged(queryClient: QueryClient, slug: string, overview: PruningOverview) {
  queryClient.setQueryData(queryKeys.pruning(slug), overview);
  void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
}
