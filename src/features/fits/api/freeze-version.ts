import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { FreezeVersion, ModelVersion } from '@shared/schemas/fits';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export function freezeVersion(slug: string, body: FreezeVersion): Promise<ModelVersion> {
  return api.post<ModelVersion>(analysisPath(slug, 'versions'), body);
}

/** Freezing adds a version and changes the overview's "model version" card. */
export function useFreezeVersion(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: FreezeVersion) => freezeVersion(slug, body),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: queryKeys.versions(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
    },
  });
}
