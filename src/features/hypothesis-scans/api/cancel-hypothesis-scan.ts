import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { HypothesisScan } from '@shared/schemas/hypothesis-scan';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function cancelHypothesisScan(slug: string, id: number): Promise<HypothesisScan> {
  return api.post<HypothesisScan>(analysisPath(slug, 'hypothesis-scans', id, 'cancel'));
}

export function useCancelHypothesisScan(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => cancelHypothesisScan(slug, id),
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: queryKeys.hypothesisScans(slug) }),
  });
}
