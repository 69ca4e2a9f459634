import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { SmoothPreview, SmoothRequest } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/**
 * Smooth a shape effect of an entry (`save: false` previews before and after, writing nothing),
 * or bring back the variation as uploaded (`method: 'restore'`).
 */
export function smoothEffect(slug: string, key: string, effectId: number, body: SmoothRequest): Promise<SmoothPreview> {
  return api.post<SmoothPreview>(analysisPath(slug, 'entries', key, 'effects', effectId, 'smooth'), body);
}

export function useSmoothEffect(slug: string, key: string, effectId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: SmoothRequest) => smoothEffect(slug, key, effectId, body),
    onSuccess: (preview) => {
      if (!preview.saved) return;
      // The effect, the entry's revisions (and maybe its state) and the register's summary changed.
      void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
    },
  });
}
