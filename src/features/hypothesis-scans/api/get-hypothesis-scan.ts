import { queryOptions, useQuery } from '@tanstack/react-query';
import type { HypothesisScan } from '@shared/schemas/hypothesis-scan';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** One scan, with its result once it has succeeded (and while nothing it read is blinded). */
export function getHypothesisScan(slug: string, id: number): Promise<HypothesisScan> {
  return api.get<HypothesisScan>(analysisPath(slug, 'hypothesis-scans', id));
}

/** An ended scan never changes; a queued or running one is asked again every POLL_MS. */
export const hypothesisScanQueryOptions = (slug: string, id: number) =>
  queryOptions({
    queryKey: queryKeys.hypothesisScan(slug, id),
    queryFn: () => getHypothesisScan(slug, id),
    refetchInterval: (query) => (query.state.data && isActive(query.state.data.state) ? POLL_MS : false),
  });

export function useHypothesisScan(slug: string, id: number) {
  return useQuery(hypothesisScanQueryOptions(slug, id));
}
