import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ReviewSetDetail, StartReviewSet } from '@shared/schemas/review-sets';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** Queue the standard review set on a version; the server answers 202 with the set. */
export function startReviewSet(slug: string, body: StartReviewSet): Promise<ReviewSetDetail> {
  return api.post<ReviewSetDetail>(analysisPath(slug, 'review-sets'), body);
}

export function useStartReviewSet(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: StartReviewSet) => startReviewSet(slug, body),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: queryKeys.reviewSets(slug), exact: true });
      void queryClient.invalidateQueries({ queryKey: queryKeys.fits(slug), exact: true });
    },
  });
}
