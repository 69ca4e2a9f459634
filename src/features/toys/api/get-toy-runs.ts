import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ToyRun } from '@shared/schemas/toys';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** The toy runs of a fit, newest first; the list carries no summaries. */
export function getToyRuns(slug: string, fitId: number): Promise<ToyRun[]> {
  return api.get<ToyRun[]>(analysisPath(slug, 'fits', fitId, 'toys'));
}

/** The list polls while any run in it is queued or running, and stops once every run has ended. */
export const toyRunsQueryOptions = (slug: string, fitId: number) =>
  queryOptions({
    queryKey: queryKeys.toyRuns(slug, fitId),
    queryFn: () => getToyRuns(slug, fitId),
    refetchInterval: (query) => (query.state.data?.some((r) => isActive(r.state)) ? POLL_MS : false),
  });

export function useToyRuns(slug: string, fitId: number) {
  return useQuery(toyRunsQueryOptions(slug, fitId));
}
