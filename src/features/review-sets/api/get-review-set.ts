import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ReviewSetDetail } from '@shared/schemas/review-sets';
import { analysisPath, api } from '../../../lib/api-client';
import { POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** One review set with its members side by side. */
export function getReviewSet(slug: string, id: number): Promise<ReviewSetDetail> {
  return api.get<ReviewSetDetail>(analysisPath(slug, 'review-sets', id));
}

/** A running set is asked again until every member has ended; a finished one never changes. */
export const reviewSetQueryOptions = (slug: string, id: number) =>
  queryOptions({
    queryKey: queryKeys.reviewSet(slug, id),
    queryFn: () => getReviewSet(slug, id),
    refetchInterval: (query) => (query.state.data?.state === 'running' ? POLL_MS * 2 : false),
    staleTime: (query) => (query.state.data && query.state.data.state !== 'running' ? Infinity : 0),
  });

export function useReviewSet(slug: string, id: number) {
  return useQuery({ ...reviewSetQueryOptions(slug, id), enabled: Number.isInteger(id) });
}
