import { queryOptions, useQuery } from '@tanstack/react-query';
import type { AnalysisOverview } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getAnalysis(slug: string): Promise<AnalysisOverview> {
  return api.get<AnalysisOverview>(`/api/analyses/${encodeURIComponent(slug)}`);
}

export const analysisQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.overview(slug), queryFn: () => getAnalysis(slug) });

/** The analysis overview, which also carries the caller's role and allowed actions. */
export function useAnalysis(slug: string) {
  return useQuery(analysisQueryOptions(slug));
}
