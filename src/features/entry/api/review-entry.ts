import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { EntryDetail, ReviewAction } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { entryChanged } from './invalidate';

export function reviewEntry(slug: string, key: string, body: ReviewAction): Promise<EntryDetail> {
  return api.post<EntryDetail>(analysisPath(slug, 'entries', key, 'review'), body);
}

export function useReviewEntry(slug: string, key: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: ReviewAction) => reviewEntry(slug, key, body), onSuccess: (detail) => entryChanged(queryClient, slug, detail) });
}
