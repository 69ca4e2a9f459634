import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { HypothesisScan, StartHypothesisScan } from '@shared/schemas/hypothesis-scan';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** Queue a scan of a frozen version; the server answers 202 with the scan, queued. */
export function startHypothesisScan(slug: string, body: StartHypothesisScan): Promise<HypothesisScan> {
  return api.post<HypothesisScan>(analysisPath(slug, 'hypothesis-scans'), body);
}

export function useStartHypothesisScan(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: StartHypothesisScan) => startHypothesisScan(slug, body),
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: queryKeys.hypothesisScans(slug), exact: true }),
  });
}
