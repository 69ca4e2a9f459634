import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { BlindingLog, BlindingSettings } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { blindingChanged } from './invalidate';

/** A convener sets how many conveners (other than the requester) must approve unblinding. */
export function changeBlindingSettings(slug: string, body: BlindingSettings): Promise<BlindingLog> {
  return api.put<BlindingLog>(analysisPath(slug, 'blinding', 'settings'), body);
}

export function useChangeBlindingSettings(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: BlindingSettings) => changeBlindingSettings(slug, body), onSuccess: (log) => blindingChanged(queryClient, slug, log) });
}
