import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Model } from '@shared/schemas/api';
import type { TemplateInput } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateModel } from './invalidate';

export type Template = Model['templates'][number];

export function putTemplate(slug: string, region: string, process: string, body: TemplateInput): Promise<Template> {
  return api.put<Template>(analysisPath(slug, 'templates', region, process), body);
}

export function usePutTemplate(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ region, process, body }: { region: string; process: string; body: TemplateInput }) => putTemplate(slug, region, process, body),
    onSuccess: () => invalidateModel(queryClient, slug),
  });
}
