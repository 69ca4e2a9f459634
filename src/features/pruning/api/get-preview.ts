import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PruningPreview } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { POLL_MS } from '../../../lib/fits';
import { queryKeys } from '../../../lib/query-keys';

export function getPruningPreview(slug: string, id: number): Promise<PruningPreview> {
  return api.get<PruningPreview>(analysisPath(slug, 'pruning', 'previews', String(id)));
}

/** A preview is asked for again while its refit runs. */
export const pruningPreviewQueryOptions = (slug: string, id: number) =>
  queryOptions({
    queryKey: queryKeys.pruningPreview(slug, id),
    queryFn: () => getPruningPreview(slug, id),
    refetchInterval: (query) => (query.state.data?.state === 'running' ? POLL_MS : false),
  });

export function usePruningPreview(slug: string, id: number | null) {
  return useQuery({ ...pruningPreviewQueryOptions(slug, id ?? 0), enabled: id !== null });
}
