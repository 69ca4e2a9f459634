import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ReviewSetSummary } from '@shared/schemas/review-sets';
import { analysisPath, api } from '../../../lib/api-client';
import { POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** The review sets of an analysis, newest first. */
export function getReviewSets(slug: string): Promise<ReviewSetSummary[]> {
  return api.get<ReviewSetSummary[]>(analysisPath(slug, 'review-sets'));
}

/** The list polls while any set is running. */
export const reviewSetsQueryOptions = (slug: string) =>
  queryOptions({
    queryKey: queryKeys.reviewSets(slug),
    queryFn: () => getReviewSets(slug),
    refetchInterval: (query) => (query.state.data?.some((s) => s.state === 'running') ? POLL_MS * 2 : false),
  });

export function useReviewSets(slug: string) {
  return useQuery(reviewSetsQueryOptions(slug));
}
