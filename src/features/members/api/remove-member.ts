import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api-client';
import { invalidateMembership } from './invalidate';

export function removeMember(slug: string, userId: number): Promise<void> {
  return api.delete(`/api/analyses/${encodeURIComponent(slug)}/members/${userId}`);
}

export function useRemoveMember(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (userId: number) => removeMember(slug, userId),
    onSuccess: () => invalidateMembership(queryClient, slug),
  });
}
