import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Me } from '@shared/schemas/api';
import { api, csrfTokensIssued, resetCsrfToken } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export type AcceptInvitation = { name: string; password: string };

/** Creates the account and signs it in: a new session, so a new CSRF token, as at sign-in. */
export async function acceptInvitation(token: string, body: AcceptInvitation): Promise<Me> {
  const issuedBefore = csrfTokensIssued();
  const me = await api.post<Me>(`/api/invitations/${encodeURIComponent(token)}/accept`, body);
  if (csrfTokensIssued() === issuedBefore) resetCsrfToken();
  return me;
}

export function useAcceptInvitation(token: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: AcceptInvitation) => acceptInvitation(token, body),
    onSuccess: (me) => {
      queryClient.clear();
      queryClient.setQueryData(queryKeys.me, me);
    },
  });
}
