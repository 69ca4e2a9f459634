import { queryOptions, useQuery } from '@tanstack/react-query';
import type { GroupsView } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getGroups(slug: string): Promise<GroupsView> {
  return api.get<GroupsView>(analysisPath(slug, 'groups'));
}

export const groupsQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.groups(slug), queryFn: () => getGroups(slug) });

export function useGroups(slug: string) {
  return useQuery(groupsQueryOptions(slug));
}
