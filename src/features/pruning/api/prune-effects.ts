import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PruningOverview, PruningSelection } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { pruningChanged } from './invalidate';

/** POST …/pruning: marks the selection pruned, with a comment in each entry's history. */
export function pruneEffects(slug: string, selection: PruningSelection): Promise<PruningOverview> {
  return api.post<PruningOverview>(analysisPath(slug, 'pruning'), selection);
}

export function usePruneEffects(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (selection: PruningSelection) => pruneEffects(slug, selection),
    onSuccess: (overview) => pruningChanged(queryClient, slug, overview),
  });
}
