import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { HypothesisUploadResult } from '@shared/schemas/signal-hypotheses';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateHypotheses } from './invalidate';

export type HypothesisUpload = { key: string; label: string; value: string; file: File; effects: string | null; save: boolean };

/**
 * One hypothesis from its templates CSV and, optionally, its effects (the text of a JSON file).
 * `save: false` checks it and reports what it would be, writing nothing; `save: true` writes it.
 */
export function uploadSignalHypothesis(slug: string, { key, label, value, file, effects, save }: HypothesisUpload): Promise<HypothesisUploadResult> {
  const form = new FormData();
  form.append('key', key);
  form.append('label', label);
  form.append('value', value);
  if (effects !== null) form.append('effects', effects);
  form.append('file', file);
  return api.upload<HypothesisUploadResult>(`${analysisPath(slug, 'signal-hypotheses')}?save=${save ? 1 : 0}`, form);
}

export function useUploadSignalHypothesis(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (upload: HypothesisUpload) => uploadSignalHypothesis(slug, upload),
    onSuccess: (result) => {
      if (result.saved) invalidateHypotheses(queryClient, slug);
    },
  });
}
