import { useQuery } from '@tanstack/react-query';
import type { FitPart, FitPartName } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** One large part of a finished fit's result (correlation, information, yields); it never changes. */
export function getFitPart<K extends FitPartName>(slug: string, id: number, part: K): Promise<FitPart<K>> {
  return api.get<FitPart<K>>(analysisPath(slug, 'fits', id, 'parts', part));
}

export function useFitPart<K extends FitPartName>(slug: string, id: number, part: K) {
  return useQuery({ queryKey: queryKeys.fitPart(slug, id, part), queryFn: () => getFitPart(slug, id, part), staleTime: Infinity });
}
