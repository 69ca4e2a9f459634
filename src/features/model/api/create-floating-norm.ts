import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Model } from '@shared/schemas/api';
import type { FloatingNormInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export type FloatingNorm = Model['floatingNorms'][number];

export function createFloatingNorm(slug: string, body: FloatingNormInput): Promise<FloatingNorm> {
  return api.post<FloatingNorm>(analysisPath(slug, 'floating-norms'), body);
}

export function useCreateFloatingNorm(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: FloatingNormInput) => createFloatingNorm(slug, body), onSuccess: () => invalidateModel(queryClient, slug) });
}
