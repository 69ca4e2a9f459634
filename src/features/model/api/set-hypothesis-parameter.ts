import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { HypothesisParameterInput } from '@shared/schemas/signal-hypotheses';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateHypotheses } from './invalidate';

export function setHypothesisParameter(slug: string, body: HypothesisParameterInput): Promise<{ name: string; unit: string }> {
  return api.put(analysisPath(slug, 'hypothesis-parameter'), body);
}

export function useSetHypothesisParameter(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: HypothesisParameterInput) => setHypothesisParameter(slug, body),
    onSuccess: () => invalidateHypotheses(queryClient, slug),
  });
}
