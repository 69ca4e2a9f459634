import { queryOptions, useQuery } from '@tanstack/react-query';
import type { EntryDetail } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { entriesQueryKey } from '../../register/api/get-entries';

/** Under the register's key, so that invalidating the register refreshes every entry too. */
export const entryQueryKey = (slug: string, key: string) => [...entriesQueryKey(slug), key] as const;

export function getEntry(slug: string, key: string): Promise<EntryDetail> {
  return api.get<EntryDetail>(analysisPath(slug, 'entries', key));
}

export const entryQueryOptions = (slug: string, key: string) => queryOptions({ queryKey: entryQueryKey(slug, key), queryFn: () => getEntry(slug, key) });

export function useEntry(slug: string, key: string) {
  return useQuery(entryQueryOptions(slug, key));
}
