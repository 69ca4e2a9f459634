import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Region } from '@shared/schemas/api';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

/** Set (or clear, with null) a region's observed counts. */
export function putObserved(slug: string, region: string, observed: number[] | null): Promise<Region> {
  return api.put<Region>(analysisPath(slug, 'regions', region, 'observed'), { observed });
}

export function usePutObserved(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ region, observed }: { region: string; observed: number[] | null }) => putObserved(slug, region, observed),
    onSuccess: () => invalidateModel(queryClient, slug),
  });
}
