import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Region } from '@shared/schemas/api';
import type { RegionPatch } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export function updateRegion(slug: string, key: string, body: RegionPatch): Promise<Region> {
  return api.patch<Region>(analysisPath(slug, 'regions', key), body);
}

export function useUpdateRegion(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ key, body }: { key: string; body: RegionPatch }) => updateRegion(slug, key, body),
    onSuccess: () => invalidateModel(queryClient, slug),
  });
}
