import { useMemo } from 'react';
import { queryOptions, useQuery } from '@tanstack/react-query';
import type { EntrySummary } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getEntries(slug: string): Promise<EntrySummary[]> {
  return api.get<EntrySummary[]>(`/api/analyses/${encodeURIComponent(slug)}/entries`);
}

export const entriesQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.entries(slug), queryFn: () => getEntries(slug) });

export function useEntries(slug: string) {
  return useQuery(entriesQueryOptions(slug));
}

/** The groups named among the entries, sorted; for the group choices of a form or a filter. */
export function useEntryGroups(entries: EntrySummary[] | undefined): string[] {
  return useMemo(() => [...new Set((entries ?? []).map((e) => e.group).filter((g): g is string => !!g))].sort(), [entries]);
}
