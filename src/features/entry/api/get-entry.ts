import { queryOptions, useQuery } from '@tanstack/react-query';
import type { EntryDetail } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function getEntry(slug: string, key: string): Promise<EntryDetail> {
  return api.get<EntryDetail>(analysisPath(slug, 'entries', key));
}

export const entryQueryOptions = (slug: string, key: string) => queryOptions({ queryKey: queryKeys.entry(slug, key), queryFn: () => getEntry(slug, key) });

export function useEntry(slug: string, key: string) {
  return useQuery(entryQueryOptions(slug, key));
}
