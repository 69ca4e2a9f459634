import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export function deleteProcess(slug: string, key: string): Promise<void> {
  return api.delete(analysisPath(slug, 'processes', key));
}

export function useDeleteProcess(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (key: string) => deleteProcess(slug, key), onSuccess: () => invalidateModel(queryClient, slug) });
}
