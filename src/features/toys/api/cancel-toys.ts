import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ToyRun } from '@shared/schemas/toys';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function cancelToys(slug: string, toyId: number): Promise<ToyRun> {
  return api.post<ToyRun>(analysisPath(slug, 'toys', toyId, 'cancel'));
}

export function useCancelToys(slug: string, fitId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (toyId: number) => cancelToys(slug, toyId),
    onSuccess: (_run, toyId) => {
      void queryClient.invalidateQueries({ queryKey: queryKeys.toyRuns(slug, fitId), exact: true });
      void queryClient.invalidateQueries({ queryKey: queryKeys.toyRun(slug, toyId), exact: true });
    },
  });
}
