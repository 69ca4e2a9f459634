import { queryOptions, useQuery } from '@tanstack/react-query';
import type { InvitationView } from '@shared/schemas/register';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** Public: anyone holding the link may read what it invites to. */
export function getInvitation(token: string): Promise<InvitationView> {
  return api.get<InvitationView>(`/api/invitations/${encodeURIComponent(token)}`);
}

export const invitationQueryOptions = (token: string) => queryOptions({ queryKey: queryKeys.invitation(token), queryFn: () => getInvitation(token), retry: false });

export function useInvitation(token: string) {
  return useQuery(invitationQueryOptions(token));
}
