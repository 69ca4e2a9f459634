import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { FitSummary } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateFitLists } from './get-fit';
import { queryKeys } from '../../../lib/query-keys';

export function cancelFit(slug: string, id: number): Promise<FitSummary> {
  return api.post<FitSummary>(analysisPath(slug, 'fits', id, 'cancel'));
}

export function useCancelFit(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => cancelFit(slug, id),
    onSuccess: (_fit, id) => {
      invalidateFitLists(queryClient, slug);
      void queryClient.invalidateQueries({ queryKey: queryKeys.fit(slug, id), exact: true });
    },
  });
}
