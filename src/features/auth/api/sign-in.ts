import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Me, SignIn } from '@shared/schemas/api';
import { api, csrfTokensIssued, resetCsrfToken } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export async function signIn(body: SignIn): Promise<Me> {
  const issuedBefore = csrfTokensIssued();
  const me = await api.post<Me>('/api/auth/sign-in', body);
  // Sign-in starts a new session with a new token: keep the one the response carried, else fetch it afresh.
  if (csrfTokensIssued() === issuedBefore) resetCsrfToken();
  return me;
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: (me) => {
      // Nothing cached for a previous user may leak into this session.
      queryClient.clear();
      queryClient.setQueryData(queryKeys.me, me);
    },
  });
}
