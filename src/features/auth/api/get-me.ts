import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Me } from '@shared/schemas/api';
import { api, isApiRequestError } from '../../../lib/api-client';

export const meQueryKey = ['auth', 'me'] as const;

/** The signed-in user and their memberships, or null when nobody is signed in. */
export async function getMe(): Promise<Me | null> {
  try {
    return await api.get<Me>('/api/auth/me');
  } catch (e) {
    if (isApiRequestError(e) && e.status === 401) return null;
    throw e;
  }
}

export const meQueryOptions = () => queryOptions({ queryKey: meQueryKey, queryFn: getMe, staleTime: 5 * 60_000 });

export function useMe() {
  return useQuery(meQueryOptions());
}
