import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Process } from '@shared/schemas/api';
import type { ProcessInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export type ProcessPatch = Partial<Omit<ProcessInput, 'key'>>;

export function updateProcess(slug: string, key: string, body: ProcessPatch): Promise<Process> {
  return api.patch<Process>(analysisPath(slug, 'processes', key), body);
}

export function useUpdateProcess(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ key, body }: { key: string; body: ProcessPatch }) => updateProcess(slug, key, body),
    onSuccess: () => invalidateModel(queryClient, slug),
  });
}
