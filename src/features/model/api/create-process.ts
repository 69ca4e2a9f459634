import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Process } from '@shared/schemas/api';
import type { ProcessInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export function createProcess(slug: string, body: ProcessInput): Promise<Process> {
  return api.post<Process>(analysisPath(slug, 'processes'), body);
}

export function useCreateProcess(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: ProcessInput) => createProcess(slug, body), onSuccess: () => invalidateModel(queryClient, slug) });
}
