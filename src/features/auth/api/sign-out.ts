import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api, resetCsrfToken } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export async function signOut(): Promise<void> {
  try {
    await api.post<void>('/api/auth/sign-out');
  } finally {
    resetCsrfToken();
  }
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signOut,
    onSettled: () => {
      queryClient.clear();
      queryClient.setQueryData(queryKeys.me, null);
    },
  });
}
