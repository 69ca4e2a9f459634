import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { BlindingLog, UnblindingDecision } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { blindingChanged } from './invalidate';

/** A convener approves or declines a pending request to unblind (a decline says why). */
export function decideUnblinding(slug: string, body: UnblindingDecision): Promise<BlindingLog> {
  return api.post<BlindingLog>(analysisPath(slug, 'blinding', 'decision'), body);
}

export function useDecideUnblinding(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: UnblindingDecision) => decideUnblinding(slug, body), onSuccess: (log) => blindingChanged(queryClient, slug, log) });
}
