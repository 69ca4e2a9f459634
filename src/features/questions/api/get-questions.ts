import { queryOptions, useQuery } from '@tanstack/react-query';
import type { QuestionFilter, QuestionSummary } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The query string of a filter: only the filters that are set, in a fixed order. */
export function questionQuery(filter: QuestionFilter): string {
  const params = new URLSearchParams();
  for (const key of ['state', 'owner', 'group', 'fit', 'entry'] as const) {
    const v = filter[key];
    if (v !== undefined && v !== '') params.set(key, String(v));
  }
  const s = params.toString();
  return s ? `?${s}` : '';
}

/** The questions of an analysis that match the filter, newest activity first. */
export function getQuestions(slug: string, filter: QuestionFilter = {}): Promise<QuestionSummary[]> {
  return api.get<QuestionSummary[]>(`${analysisPath(slug, 'questions')}${questionQuery(filter)}`);
}

export const questionsQueryOptions = (slug: string, filter: QuestionFilter = {}) =>
  queryOptions({ queryKey: queryKeys.questionList(slug, filter), queryFn: () => getQuestions(slug, filter) });

export function useQuestions(slug: string, filter: QuestionFilter = {}) {
  return useQuery(questionsQueryOptions(slug, filter));
}
