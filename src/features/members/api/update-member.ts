import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Member, UpdateMember } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { invalidateMembership } from './invalidate';

export function updateMember(slug: string, userId: number, body: UpdateMember): Promise<Member> {
  return api.patch<Member>(`/api/analyses/${encodeURIComponent(slug)}/members/${userId}`, body);
}

export function useUpdateMember(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ userId, ...body }: UpdateMember & { userId: number }) => updateMember(slug, userId, body),
    onSuccess: () => invalidateMembership(queryClient, slug),
  });
}
