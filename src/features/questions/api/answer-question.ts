import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AnswerQuestion, QuestionDetail } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { questionChanged } from './invalidate';

/** Add an answer to a question's thread; an open question becomes answered. */
export function answerQuestion(slug: string, id: number, body: AnswerQuestion): Promise<QuestionDetail> {
  return api.post<QuestionDetail>(analysisPath(slug, 'questions', id, 'answers'), body);
}

export function useAnswerQuestion(slug: string, id: number) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: AnswerQuestion) => answerQuestion(slug, id, body), onSuccess: (detail) => questionChanged(queryClient, slug, detail) });
}
