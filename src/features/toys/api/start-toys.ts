import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { StartToys, ToyRun } from '@shared/schemas/toys';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** Queue a toy run of a converged fit; the server answers 202 with the run, queued. */
export function startToys(slug: string, fitId: number, body: StartToys): Promise<ToyRun> {
  return api.post<ToyRun>(analysisPath(slug, 'fits', fitId, 'toys'), body);
}

export function useStartToys(slug: string, fitId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: StartToys) => startToys(slug, fitId, body),
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: queryKeys.toyRuns(slug, fitId), exact: true }),
  });
}
