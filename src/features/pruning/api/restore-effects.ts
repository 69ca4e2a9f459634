import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PruningOverview } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { pruningChanged } from './invalidate';

/** POST …/pruning/restore: pruned effects back into the fit. */
export function restoreEffects(slug: string, effects: number[], comment = ''): Promise<PruningOverview> {
  return api.post<PruningOverview>(analysisPath(slug, 'pruning', 'restore'), { effects, comment });
}

export function useRestoreEffects(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ effects, comment }: { effects: number[]; comment?: string }) => restoreEffects(slug, effects, comment),
    onSuccess: (overview) => pruningChanged(queryClient, slug, overview),
  });
}
