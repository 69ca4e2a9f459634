import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { QuestionDetail, QuestionStep } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { questionChanged } from './invalidate';

export type QuestionStepName = 'resolve' | 'reopen';

/** A convener resolves a question or reopens it, with an optional note added to the thread. */
export function stepQuestion(slug: string, id: number, step: QuestionStepName, body: QuestionStep): Promise<QuestionDetail> {
  return api.post<QuestionDetail>(analysisPath(slug, 'questions', id, step), body);
}

export function useStepQuestion(slug: string, id: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ step, note }: { step: QuestionStepName; note: string }) => stepQuestion(slug, id, step, { note }),
    onSuccess: (detail) => questionChanged(queryClient, slug, detail),
  });
}
