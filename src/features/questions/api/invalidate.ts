import type { QueryClient } from '@tanstack/react-query';
import type { QuestionDetail } from '@shared/schemas/review';
import { analysisQueryKey } from '../../analyses/api/get-analysis';
import { entriesQueryKey } from '../../register/api/get-entries';
import { questionKeys } from './keys';

/**
 * A question was raised, answered, resolved or reopened: its thread is the server's answer, and
 * every list of questions, the overview's open count and the register's markers may change.
 */
export function questionChanged(queryClient: QueryClient, slug: string, detail: QuestionDetail) {
  queryClient.setQueryData(questionKeys.detail(slug, detail.id), detail);
  void queryClient.invalidateQueries({ queryKey: [...questionKeys.all(slug), 'list'] });
  void queryClient.invalidateQueries({ queryKey: analysisQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: entriesQueryKey(slug), exact: true });
}
