import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AnalysisSummary, CreateAnalysis } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function createAnalysis(body: CreateAnalysis): Promise<AnalysisSummary> {
  return api.post<AnalysisSummary>('/api/analyses', body);
}

export function useCreateAnalysis() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createAnalysis,
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: queryKeys.analyses });
      void queryClient.invalidateQueries({ queryKey: queryKeys.me });
    },
  });
}
