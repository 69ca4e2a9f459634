import { queryOptions, useQuery } from '@tanstack/react-query';
import type { HypothesisScan } from '@shared/schemas/hypothesis-scan';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/** The scans over signal hypotheses of an analysis, newest first, with their results. */
export function getHypothesisScans(slug: string): Promise<HypothesisScan[]> {
  return api.get<HypothesisScan[]>(analysisPath(slug, 'hypothesis-scans'));
}

/** The list polls while any scan in it is queued or running. */
export const hypothesisScansQueryOptions = (slug: string) =>
  queryOptions({
    queryKey: queryKeys.hypothesisScans(slug),
    queryFn: () => getHypothesisScans(slug),
    refetchInterval: (query) => (query.state.data?.some((s) => isActive(s.state)) ? POLL_MS : false),
  });

export function useHypothesisScans(slug: string) {
  return useQuery(hypothesisScansQueryOptions(slug));
}
