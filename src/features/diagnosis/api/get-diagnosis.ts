import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Diagnosis } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { isActive, POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

/**
 * The diagnosis of one parameter in one finished fit. The first call for a parameter refits the
 * model along its scan, which takes seconds on a large model; the server keeps it afterwards.
 */
export function getDiagnosis(slug: string, fitId: number, parameter: string): Promise<Diagnosis> {
  return api.get<Diagnosis>(analysisPath(slug, 'fits', fitId, 'diagnosis', parameter));
}

/** Kept five minutes; asked again while a check run from it is queued or running. */
export const diagnosisQueryOptions = (slug: string, fitId: number, parameter: string) =>
  queryOptions({
    queryKey: queryKeys.diagnosis(slug, fitId, parameter),
    queryFn: () => getDiagnosis(slug, fitId, parameter),
    staleTime: 5 * 60_000,
    refetchInterval: (query) => (query.state.data?.checks?.some((c) => isActive(c.state)) ? 2 * POLL_MS : false),
  });

export function useDiagnosis(slug: string, fitId: number, parameter: string | null) {
  return useQuery({ ...diagnosisQueryOptions(slug, fitId, parameter ?? ''), enabled: !!parameter });
}
