import type { QueryClient } from '@tanstack/react-query';
import type { EntryDetail } from '@shared/schemas/register';
import { analysisQueryKey } from '../../analyses/api/get-analysis';
import { groupsQueryKey } from '../../groups/api/get-groups';
import { entriesQueryKey } from '../../register/api/get-entries';
import { entryQueryKey } from './get-entry';

/** An entry changed: keep the answer the server gave, and refresh the lists that summarise it. */
export function entryChanged(queryClient: QueryClient, slug: string, detail: EntryDetail) {
  queryClient.setQueryData(entryQueryKey(slug, detail.key), detail);
  void queryClient.invalidateQueries({ queryKey: entriesQueryKey(slug), exact: true });
  void queryClient.invalidateQueries({ queryKey: analysisQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: groupsQueryKey(slug) });
}
