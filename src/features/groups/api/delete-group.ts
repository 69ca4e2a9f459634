import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateGroups } from './invalidate';

export function deleteGroup(slug: string, id: number): Promise<void> {
  return api.delete(analysisPath(slug, 'groups', id));
}

export function useDeleteGroup(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (id: number) => deleteGroup(slug, id), onSuccess: () => invalidateGroups(queryClient, slug) });
}
