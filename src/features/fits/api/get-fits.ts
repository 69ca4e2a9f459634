import { queryOptions, useQuery } from '@tanstack/react-query';
import type { FitSummary } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** The fits of an analysis, newest first. */
export function getFits(slug: string): Promise<FitSummary[]> {
  return api.get<FitSummary[]>(analysisPath(slug, 'fits'));
}

/** The list polls while any fit in it is queued or running, and stops once every job has ended. */
export const fitsQueryOptions = (slug: string) =>
  queryOptions({
    queryKey: queryKeys.fits(slug),
    queryFn: () => getFits(slug),
    refetchInterval: (query) => (query.state.data?.some((f) => isActive(f.state)) ? POLL_MS : false),
  });

export function useFits(slug: string) {
  return useQuery(fitsQueryOptions(slug));
}
