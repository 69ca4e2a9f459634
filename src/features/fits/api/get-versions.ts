import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ModelVersion } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The frozen model versions of an analysis, newest first. */
export function getVersions(slug: string): Promise<ModelVersion[]> {
  return api.get<ModelVersion[]>(analysisPath(slug, 'versions'));
}

export const versionsQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.versions(slug), queryFn: () => getVersions(slug) });

export function useVersions(slug: string) {
  return useQuery(versionsQueryOptions(slug));
}
