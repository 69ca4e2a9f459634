import { queryOptions, useQuery, type QueryClient } from '@tanstack/react-query';
import type { FitDetail } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** One fit with its stored result (null until the job ends). */
export function getFit(slug: string, id: number): Promise<FitDetail> {
  return api.get<FitDetail>(analysisPath(slug, 'fits', id));
}

/** A finished fit never changes; a queued or running one is asked again every POLL_MS. */
export const fitQueryOptions = (slug: string, id: number) =>
  queryOptions({
    queryKey: queryKeys.fit(slug, id),
    queryFn: () => getFit(slug, id),
    refetchInterval: (query) => (query.state.data && isActive(query.state.data.state) ? POLL_MS : false),
    staleTime: (query) => (query.state.data && !isActive(query.state.data.state) ? Infinity : 0),
  });

export function useFit(slug: string, id: number) {
  return useQuery(fitQueryOptions(slug, id));
}

/** When a job ends, the list and the overview's "latest fit" card change too. */
export function invalidateFitLists(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: queryKeys.fits(slug), exact: true });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
}
