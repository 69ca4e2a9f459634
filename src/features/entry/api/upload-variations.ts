import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { VariationOptions, VariationPreview } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/**
 * `save: false` validates the file and returns the preview, writing nothing; `save: true`
 * saves the same file with the same options as a new revision of the entry.
 */
export function uploadVariations(slug: string, key: string, file: File, options: VariationOptions, save: boolean): Promise<VariationPreview> {
  const form = new FormData();
  form.append('file', file);
  form.append('options', JSON.stringify(options));
  return api.upload<VariationPreview>(`${analysisPath(slug, 'entries', key, 'variations')}?save=${save ? 1 : 0}`, form);
}

export function useUploadVariations(slug: string, key: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ file, options, save }: { file: File; options: VariationOptions; save: boolean }) => uploadVariations(slug, key, file, options, save),
    onSuccess: (preview) => {
      if (!preview.saved) return;
      // The entry (effects, revisions, maybe its state) and the register's summary both changed.
      void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
    },
  });
}
