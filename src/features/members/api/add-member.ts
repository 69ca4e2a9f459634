import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AddMember, Member } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { invalidateMembership } from './invalidate';

export function addMember(slug: string, body: AddMember): Promise<Member> {
  return api.post<Member>(`/api/analyses/${encodeURIComponent(slug)}/members`, body);
}

export function useAddMember(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: AddMember) => addMember(slug, body),
    onSuccess: () => invalidateMembership(queryClient, slug),
  });
}
