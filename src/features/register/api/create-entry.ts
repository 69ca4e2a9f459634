import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { EntryDetail, EntryInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function createEntry(slug: string, body: EntryInput): Promise<EntryDetail> {
  return api.post<EntryDetail>(analysisPath(slug, 'entries'), body);
}

export function useCreateEntry(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: EntryInput) => createEntry(slug, body),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.groups(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
    },
  });
}
