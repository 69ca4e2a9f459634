import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Diagnosis } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/**
 * The diagnosis of one parameter in one finished fit. The first call for a parameter refits the
 * model along its scan, which takes seconds on a large model; the server keeps it afterwards.
 */
export function getDiagnosis(slug: string, fitId: number, parameter: string): Promise<Diagnosis> {
  return api.get<Diagnosis>(analysisPath(slug, 'fits', fitId, 'diagnosis', parameter));
}

export const diagnosisQueryOptions = (slug: string, fitId: number, parameter: string) =>
  queryOptions({ queryKey: queryKeys.diagnosis(slug, fitId, parameter), queryFn: () => getDiagnosis(slug, fitId, parameter), staleTime: 5 * 60_000 });

export function useDiagnosis(slug: string, fitId: number, parameter: string | null) {
  return useQuery({ ...diagnosisQueryOptions(slug, fitId, parameter ?? ''), enabled: !!parameter });
}
