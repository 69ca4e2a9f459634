import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { FitSummary, StartFit } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateFitLists } from './get-fit';

/** Queue a fit; the server answers 202 with the fit as listed. */
export function startFit(slug: string, body: StartFit): Promise<FitSummary> {
  return api.post<FitSummary>(analysisPath(slug, 'fits'), body);
}

export function useStartFit(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: StartFit) => startFit(slug, body), onSuccess: () => invalidateFitLists(queryClient, slug) });
}
