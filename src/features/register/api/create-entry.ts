import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { EntryDetail, EntryInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { analysisQueryKey } from '../../analyses/api/get-analysis';
import { groupsQueryKey } from '../../groups/api/get-groups';
import { entriesQueryKey } from './get-entries';

export function createEntry(slug: string, body: EntryInput): Promise<EntryDetail> {
  return api.post<EntryDetail>(analysisPath(slug, 'entries'), body);
}

export function useCreateEntry(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: EntryInput) => createEntry(slug, body),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: entriesQueryKey(slug) });
      void queryClient.invalidateQueries({ queryKey: groupsQueryKey(slug) });
      void queryClient.invalidateQueries({ queryKey: analysisQueryKey(slug) });
    },
  });
}
