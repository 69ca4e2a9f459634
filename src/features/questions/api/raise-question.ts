import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { QuestionDetail, RaiseQuestion } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { questionChanged } from './invalidate';

/** Any member asks a question on a parameter, a region or bin, a fit or a version; the server e-mails those who answer. */
export function raiseQuestion(slug: string, body: RaiseQuestion): Promise<QuestionDetail> {
  return api.post<QuestionDetail>(analysisPath(slug, 'questions'), body);
}

export function useRaiseQuestion(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: RaiseQuestion) => raiseQuestion(slug, body), onSuccess: (detail) => questionChanged(queryClient, slug, detail) });
}
