import { useMutation, useQueryClient } from '@tanstack/react-query';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export function deleteTemplate(slug: string, region: string, process: string): Promise<void> {
  return api.delete(analysisPath(slug, 'templates', region, process));
}

export function useDeleteTemplate(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ region, process }: { region: string; process: string }) => deleteTemplate(slug, region, process),
    onSuccess: () => invalidateModel(queryClient, slug),
  });
}
