import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CreateUser, User } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function createUser(body: CreateUser): Promise<User> {
  return api.post<User>('/api/users', body);
}

export function useCreateUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createUser,
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: queryKeys.users }),
  });
}
