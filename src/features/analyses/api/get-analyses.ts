import { queryOptions, useQuery } from '@tanstack/react-query';
import type { AnalysisSummary } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';

export const analysesQueryKey = ['analyses'] as const;

export function getAnalyses(): Promise<AnalysisSummary[]> {
  return api.get<AnalysisSummary[]>('/api/analyses');
}

export const analysesQueryOptions = () => queryOptions({ queryKey: analysesQueryKey, queryFn: getAnalyses });

export function useAnalyses() {
  return useQuery(analysesQueryOptions());
}
