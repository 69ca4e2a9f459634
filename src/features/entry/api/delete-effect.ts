import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { EntryDetail } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { entryChanged } from './invalidate';

export function deleteEffect(slug: string, key: string, id: number): Promise<EntryDetail> {
  return api.delete<EntryDetail>(analysisPath(slug, 'entries', key, 'effects', id));
}

export function useDeleteEffect(slug: string, key: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (id: number) => deleteEffect(slug, key, id), onSuccess: (detail) => entryChanged(queryClient, slug, detail) });
}
