import type { QueryClient } from '@tanstack/react-query';
import type { EntryDetail } from '@shared/schemas/register';
import { queryKeys } from '../../../lib/query-keys';

/** An entry changed: keep the answer the server gave, and refresh the lists that summarise it. */
export function entryChanged(queryClient: QueryClient, slug: string, detail: EntryDetail) {
  queryClient.setQueryData(queryKeys.entry(slug, detail.key), detail);
  void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug), exact: true });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.groups(slug) });
}
