import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

/** Refused (409, with the reason) while register effects use the region. */
export function deleteRegion(slug: string, key: string): Promise<void> {
  return api.delete(analysisPath(slug, 'regions', key));
}

export function useDeleteRegion(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (key: string) => deleteRegion(slug, key), onSuccess: () => invalidateModel(queryClient, slug) });
}
