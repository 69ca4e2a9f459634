import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ModelCsvKind, ModelUploadResult } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

/** `save: false` checks the file and reports what it would set, writing nothing; `save: true` writes it. */
export function uploadModelCsv(slug: string, kind: ModelCsvKind, file: File, save: boolean): Promise<ModelUploadResult> {
  const form = new FormData();
  form.append('file', file);
  return api.upload<ModelUploadResult>(`${analysisPath(slug, 'model', 'csv')}?kind=${kind}&save=${save ? 1 : 0}`, form);
}

export function useUploadModelCsv(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ kind, file, save }: { kind: ModelCsvKind; file: File; save: boolean }) => uploadModelCsv(slug, kind, file, save),
    onSuccess: (result) => {
      if (result.saved) invalidateModel(queryClient, slug);
    },
  });
}
