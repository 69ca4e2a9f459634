import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Model } from '@shared/schemas/api';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The model as the caller may see it: blinded signal regions arrive with `observed: null, withheld: true`. */
export function getModel(slug: string): Promise<Model> {
  return api.get<Model>(`/api/analyses/${encodeURIComponent(slug)}/model`);
}

export const modelQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.model(slug), queryFn: () => getModel(slug) });

export function useModel(slug: string) {
  return useQuery(modelQueryOptions(slug));
}
