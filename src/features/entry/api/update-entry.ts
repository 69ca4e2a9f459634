import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { EntryDetail, EntryPatch } from '@shared/schemas/register';
import { analysisPath, api, isApiRequestError } from '../../../lib/api-client';
import { entryChanged } from './invalidate';
import { queryKeys } from '../../../lib/query-keys';

/** `version` is the one the editor started from; the server answers 409 when someone else saved in between. */
export function updateEntry(slug: string, key: string, body: EntryPatch): Promise<EntryDetail> {
  return api.patch<EntryDetail>(analysisPath(slug, 'entries', key), body);
}

export function useUpdateEntry(slug: string, key: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: EntryPatch) => updateEntry(slug, key, body),
    onSuccess: (detail) => entryChanged(queryClient, slug, detail),
    onError: (e) => {
      // Someone else's change: load it, so the next edit starts from what is there now.
      if (isApiRequestError(e) && e.status === 409) void queryClient.invalidateQueries({ queryKey: queryKeys.entry(slug, key) });
    },
  });
}
