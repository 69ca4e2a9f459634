import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Group } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateGroups } from './invalidate';

export function renameGroup(slug: string, id: number, name: string): Promise<Group> {
  return api.patch<Group>(analysisPath(slug, 'groups', id), { name });
}

export function useRenameGroup(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, name }: { id: number; name: string }) => renameGroup(slug, id, name),
    onSuccess: () => invalidateGroups(queryClient, slug),
  });
}
