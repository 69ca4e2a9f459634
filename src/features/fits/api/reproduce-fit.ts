import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { FitSummary, Reproduction } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';
import { invalidateFitLists } from './get-fit';

/** Runs a fit again with its version and options, as a new fit that names it. */
export function useReproduceFit(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api.post<FitSummary>(analysisPath(slug, 'fits', id, 'reproduce')),
    onSuccess: () => invalidateFitLists(queryClient, slug),
  });
}

/** A rerun against the fit it reproduces (only once both have ended). */
export function useReproduction(slug: string, id: number, enabled: boolean) {
  return useQuery({
    queryKey: queryKeys.reproduction(slug, id),
    queryFn: () => api.get<Reproduction>(analysisPath(slug, 'fits', id, 'reproduction')),
    enabled,
    staleTime: Infinity,
  });
}
