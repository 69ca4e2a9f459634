import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ApprovalChecklist } from '@shared/schemas/approval';
import type { BlindingLog } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The blinding state of an analysis and its log of requests and decisions. */
export function getBlinding(slug: string): Promise<BlindingLog> {
  return api.get<BlindingLog>(analysisPath(slug, 'blinding'));
}

export const blindingQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.blinding(slug), queryFn: () => getBlinding(slug) });

export function useBlinding(slug: string) {
  return useQuery(blindingQueryOptions(slug));
}

/** What the server checks before unblinding, as it stands now (recomputed on every read). */
export function useUnblindingChecklist(slug: string, enabled: boolean) {
  return useQuery({ queryKey: queryKeys.blindingChecklist(slug), queryFn: () => api.get<ApprovalChecklist>(analysisPath(slug, 'blinding', 'checklist')), enabled });
}
