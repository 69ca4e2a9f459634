import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';
import { queryKeys } from '../../../lib/query-keys';

/** What an import created, counted. */
export type ImportResult = { regions: number; processes: number; entries: number; parametersOfInterest: number; hypotheses: number };

/** Only accepted into an analysis that has no model yet. */
export function importExchange(slug: string, file: File): Promise<ImportResult> {
  const form = new FormData();
  form.append('file', file);
  return api.upload<ImportResult>(analysisPath(slug, 'exchange'), form);
}

/** Where the whole model downloads as one exchange file (blinded signal-region data left out). */
export const exchangeDownloadUrl = (slug: string) => analysisPath(slug, 'exchange');

export function useImportExchange(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (file: File) => importExchange(slug, file),
    onSuccess: () => {
      invalidateModel(queryClient, slug);
      void queryClient.invalidateQueries({ queryKey: queryKeys.groups(slug) });
    },
  });
}
