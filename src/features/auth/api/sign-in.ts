import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Me, SignIn } from '@shared/schemas/api';
import { api, resetCsrfToken } from '../../../lib/api-client';
import { meQueryKey } from './get-me';

export async function signIn(body: SignIn): Promise<Me> {
  const me = await api.post<Me>('/api/auth/sign-in', body);
  // The server issues a new session, and with it a new token.
  resetCsrfToken();
  return me;
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: (me) => {
      // Nothing cached for a previous user may leak into this session.
      queryClient.clear();
      queryClient.setQueryData(meQueryKey, me);
    },
  });
}
