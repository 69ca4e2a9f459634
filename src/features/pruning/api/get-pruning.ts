import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PruningOverview } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The analysis's pruning rules, the effects they propose, the effects pruned and the fit a preview compares with. */
export function getPruning(slug: string): Promise<PruningOverview> {
  return api.get<PruningOverview>(analysisPath(slug, 'pruning'));
}

export const pruningQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.pruning(slug), queryFn: () => getPruning(slug) });

export function usePruning(slug: string) {
  return useQuery(pruningQueryOptions(slug));
}
