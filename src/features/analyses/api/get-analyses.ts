import { queryOptions, useQuery } from '@tanstack/react-query';
import type { AnalysisSummary } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getAnalyses(): Promise<AnalysisSummary[]> {
  return api.get<AnalysisSummary[]>('/api/analyses');
}

export const analysesQueryOptions = () => queryOptions({ queryKey: queryKeys.analyses, queryFn: getAnalyses });

export function useAnalyses() {
  return useQuery(analysesQueryOptions());
}
