import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Region } from '@shared/schemas/api';
import type { RegionInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export function createRegion(slug: string, body: RegionInput): Promise<Region> {
  return api.post<Region>(analysisPath(slug, 'regions'), body);
}

export function useCreateRegion(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: RegionInput) => createRegion(slug, body), onSuccess: () => invalidateModel(queryClient, slug) });
}
