import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Member } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getMembers(slug: string): Promise<Member[]> {
  return api.get<Member[]>(`/api/analyses/${encodeURIComponent(slug)}/members`);
}

export const membersQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.members(slug), queryFn: () => getMembers(slug) });

export function useMembers(slug: string) {
  return useQuery(membersQueryOptions(slug));
}
