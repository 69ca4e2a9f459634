import { queryOptions, useQuery } from '@tanstack/react-query';
import type { EntryDetail } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

export function getEntry(slug: string, key: string): Promise<EntryDetail> {
  return api.get<EntryDetail>(analysisPath(slug, 'entries', key));
}

/** Asked for again while the refit of its latest upload runs (the page shows what the upload does). */
export const entryQueryOptions = (slug: string, key: string) =>
  queryOptions({
    queryKey: queryKeys.entry(slug, key),
    queryFn: () => getEntry(slug, key),
    refetchInterval: (query) => (query.state.data?.impactCheck?.state === 'running' ? 2 * POLL_MS : false),
  });

export function useEntry(slug: string, key: string) {
  return useQuery(entryQueryOptions(slug, key));
}
