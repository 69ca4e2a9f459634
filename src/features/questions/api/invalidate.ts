import type { QueryClient } from '@tanstack/react-query';
import type { QuestionDetail } from '@shared/schemas/review';
import { queryKeys } from '../../../lib/query-keys';

/**
 * A question was raised, answered, resolved or reopened: its thread is the server's answer, and
 * every list of questions, the overview's open count and the register's markers may change.
 */
export function questionChanged(queryClient: QueryClient, slug: string, detail: QuestionDetail) {
  queryClient.setQueryData(queryKeys.question(slug, detail.id), detail);
  void queryClient.invalidateQueries({ queryKey: queryKeys.questionLists(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug), exact: true });
}
