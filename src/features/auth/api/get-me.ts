import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Me } from '@shared/schemas/api';
import { api, isApiRequestError } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The signed-in user and their memberships, or null when nobody is signed in. */
export async function getMe(): Promise<Me | null> {
  try {
    return await api.get<Me>('/api/auth/me');
  } catch (e) {
    if (isApiRequestError(e) && e.status === 401) return null;
    throw e;
  }
}

export const meQueryOptions = () => queryOptions({ queryKey: queryKeys.me, queryFn: getMe, staleTime: 5 * 60_000 });

export function useMe() {
  return useQuery(meQueryOptions());
}
