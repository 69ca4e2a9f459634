import { queryOptions, useQuery } from '@tanstack/react-query';
import type { User } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';

export const usersQueryKey = ['users'] as const;

export function getUsers(): Promise<User[]> {
  return api.get<User[]>('/api/users');
}

export const usersQueryOptions = () => queryOptions({ queryKey: usersQueryKey, queryFn: getUsers });

export function useUsers() {
  return useQuery(usersQueryOptions());
}
