import { queryOptions, useQuery } from '@tanstack/react-query';
import type { GroupsView } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';

export const groupsQueryKey = (slug: string) => ['analyses', slug, 'groups'] as const;

export function getGroups(slug: string): Promise<GroupsView> {
  return api.get<GroupsView>(analysisPath(slug, 'groups'));
}

export const groupsQueryOptions = (slug: string) => queryOptions({ queryKey: groupsQueryKey(slug), queryFn: () => getGroups(slug) });

export function useGroups(slug: string) {
  return useQuery(groupsQueryOptions(slug));
}
