import { queryOptions, useQuery } from '@tanstack/react-query';
import type { FitComparison } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** Fit `id` (a) against fit `otherId` (b): deltas are b − a, largest change first. */
export function getComparison(slug: string, id: number, otherId: number): Promise<FitComparison> {
  return api.get<FitComparison>(analysisPath(slug, 'fits', id, 'compare', otherId));
}

export const comparisonQueryOptions = (slug: string, id: number, otherId: number) =>
  queryOptions({ queryKey: queryKeys.comparison(slug, id, otherId), queryFn: () => getComparison(slug, id, otherId), staleTime: Infinity });

export function useComparison(slug: string, id: number, otherId: number | null) {
  return useQuery({ ...comparisonQueryOptions(slug, id, otherId ?? 0), enabled: otherId !== null });
}
