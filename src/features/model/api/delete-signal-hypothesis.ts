import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateHypotheses } from './invalidate';

export function deleteSignalHypothesis(slug: string, key: string): Promise<void> {
  return api.delete(analysisPath(slug, 'signal-hypotheses', key));
}

export function useDeleteSignalHypothesis(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (key: string) => deleteSignalHypothesis(slug, key),
    onSuccess: () => invalidateHypotheses(queryClient, slug),
  });
}
