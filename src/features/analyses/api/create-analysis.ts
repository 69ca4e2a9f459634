import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AnalysisSummary, CreateAnalysis } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { analysesQueryKey } from './get-analyses';
import { meQueryKey } from '../../auth/api/get-me';

export function createAnalysis(body: CreateAnalysis): Promise<AnalysisSummary> {
  return api.post<AnalysisSummary>('/api/analyses', body);
}

export function useCreateAnalysis() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createAnalysis,
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: analysesQueryKey });
      void queryClient.invalidateQueries({ queryKey: meQueryKey });
    },
  });
}
