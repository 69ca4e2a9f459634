import { queryOptions, useQuery } from '@tanstack/react-query';
import type { QuestionDetail } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** One question with its body and thread. */
export function getQuestion(slug: string, id: number): Promise<QuestionDetail> {
  return api.get<QuestionDetail>(analysisPath(slug, 'questions', id));
}

export const questionQueryOptions = (slug: string, id: number) => queryOptions({ queryKey: queryKeys.question(slug, id), queryFn: () => getQuestion(slug, id) });

export function useQuestion(slug: string, id: number) {
  return useQuery({ ...questionQueryOptions(slug, id), enabled: Number.isInteger(id) && id > 0 });
}
