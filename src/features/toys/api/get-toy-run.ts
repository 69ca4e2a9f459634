import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ToyRun } from '@shared/schemas/toys';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** One toy run, with its summary once it has succeeded. */
export function getToyRun(slug: string, toyId: number): Promise<ToyRun> {
  return api.get<ToyRun>(analysisPath(slug, 'toys', toyId));
}

/** An ended run never changes; a queued or running one is asked again every POLL_MS. */
export const toyRunQueryOptions = (slug: string, toyId: number) =>
  queryOptions({
    queryKey: queryKeys.toyRun(slug, toyId),
    queryFn: () => getToyRun(slug, toyId),
    refetchInterval: (query) => (query.state.data && isActive(query.state.data.state) ? POLL_MS : false),
    staleTime: (query) => (query.state.data && !isActive(query.state.data.state) ? Infinity : 0),
  });

export function useToyRun(slug: string, toyId: number | null) {
  return useQuery({ ...toyRunQueryOptions(slug, toyId ?? 0), enabled: toyId !== null });
}
