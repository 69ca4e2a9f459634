import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ReplicaOptions, ReplicaPreview } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/**
 * One systematic from alternative templates of a (region, process): `save: false` previews every
 * effect that would be written, `save: true` writes them (components after the first become entries
 * of their own).
 */
export function uploadReplicas(slug: string, key: string, file: File, options: ReplicaOptions, save: boolean): Promise<ReplicaPreview> {
  const form = new FormData();
  form.append('file', file);
  form.append('options', JSON.stringify(options));
  return api.upload<ReplicaPreview>(`${analysisPath(slug, 'entries', key, 'replicas')}?save=${save ? 1 : 0}`, form);
}

export function useUploadReplicas(slug: string, key: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ file, options, save }: { file: File; options: ReplicaOptions; save: boolean }) => uploadReplicas(slug, key, file, options, save),
    onSuccess: (preview) => {
      if (!preview.saved) return;
      // The entry, the new component entries and the register's summary all changed.
      void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.groups(slug) });
    },
  });
}
