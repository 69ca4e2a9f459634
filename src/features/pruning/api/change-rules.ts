import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PruningOverview, PruningRules } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { pruningChanged } from './invalidate';

/** PUT …/pruning/rules: the overview comes back with the candidates of the new rules. */
export function changePruningRules(slug: string, rules: PruningRules): Promise<PruningOverview> {
  return api.put<PruningOverview>(analysisPath(slug, 'pruning', 'rules'), rules);
}

export function useChangePruningRules(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (rules: PruningRules) => changePruningRules(slug, rules),
    onSuccess: (overview) => pruningChanged(queryClient, slug, overview),
  });
}
