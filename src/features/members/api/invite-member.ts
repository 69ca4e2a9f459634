import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { MemberRole } from '@shared/permissions';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateMembership } from './invalidate';

export type Invite = { email: string; role: MemberRole };
/** `added`: the address had an account and is a member now; `invited`: an e-mail with a link went out. */
export type InviteOutcome = { outcome: 'added' | 'invited'; email: string };

export function inviteMember(slug: string, body: Invite): Promise<InviteOutcome> {
  return api.post<InviteOutcome>(analysisPath(slug, 'invitations'), body);
}

export function useInviteMember(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: Invite) => inviteMember(slug, body), onSuccess: () => invalidateMembership(queryClient, slug) });
}
