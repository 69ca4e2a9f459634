import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ApprovalChecklist, StaleEffect } from '@shared/schemas/approval';
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
      // the versions, their checklist and the stale effects (resolved by the freeze)
      void queryClient.invalidateQueries({ queryKey: queryKeys.versions(slug) });
      void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
    },
  });
}

/** The gates of a version frozen for approval, as they stand now (entries accepted, no open question). */
export function useVersionChecklist(slug: string, enabled: boolean) {
  return useQuery({ queryKey: queryKeys.versionChecklist(slug), queryFn: () => api.get<ApprovalChecklist>(analysisPath(slug, 'versions', 'approval-checklist')), enabled });
}

/** Shape effects whose nominal changed since upload: the freeze asks how to keep each. */
export function useStaleEffects(slug: string) {
  return useQuery({ queryKey: queryKeys.staleEffects(slug), queryFn: () => api.get<StaleEffect[]>(analysisPath(slug, 'versions', 'stale-effects')) });
}
