import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export function deleteFloatingNorm(slug: string, key: string): Promise<void> {
  return api.delete(analysisPath(slug, 'floating-norms', key));
}

export function useDeleteFloatingNorm(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (key: string) => deleteFloatingNorm(slug, key), onSuccess: () => invalidateModel(queryClient, slug) });
}
