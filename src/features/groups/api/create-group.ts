import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Group } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateGroups } from './invalidate';

export function createGroup(slug: string, name: string): Promise<Group> {
  return api.post<Group>(analysisPath(slug, 'groups'), { name });
}

export function useCreateGroup(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (name: string) => createGroup(slug, name), onSuccess: () => invalidateGroups(queryClient, slug) });
}
