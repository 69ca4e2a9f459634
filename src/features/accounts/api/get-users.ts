import { queryOptions, useQuery } from '@tanstack/react-query';
import type { User } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getUsers(): Promise<User[]> {
  return api.get<User[]>('/api/users');
}

export const usersQueryOptions = () => queryOptions({ queryKey: queryKeys.users, queryFn: getUsers });

export function useUsers() {
  return useQuery(usersQueryOptions());
}
