import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PruningPreview, PruningSelection } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** POST …/pruning/previews (202): the refit starts on the server; the answer is the preview, still running. */
export function startPruningPreview(slug: string, selection: Omit<PruningSelection, 'comment'>): Promise<PruningPreview> {
  return api.post<PruningPreview>(analysisPath(slug, 'pruning', 'previews'), selection);
}

export function useStartPruningPreview(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (selection: Omit<PruningSelection, 'comment'>) => startPruningPreview(slug, selection),
    onSuccess: (preview) => queryClient.setQueryData(queryKeys.pruningPreview(slug, preview.id), preview),
  });
}
