import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { BlindingLog, UnblindingRequest } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { blindingChanged } from './invalidate';

/** An analyst asks to unblind, saying why the analysis is ready. */
export function requestUnblinding(slug: string, body: UnblindingRequest): Promise<BlindingLog> {
  return api.post<BlindingLog>(analysisPath(slug, 'blinding', 'request'), body);
}

export function useRequestUnblinding(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: UnblindingRequest) => requestUnblinding(slug, body), onSuccess: (log) => blindingChanged(queryClient, slug, log) });
}
