import type { QueryClient } from '@tanstack/react-query';
import type { BlindingLog } from '@shared/schemas/review';
import { queryKeys } from '../../../lib/query-keys';

/**
 * The blinding state changed: the overview shows it, and once unblinded the server sends the
 * signal regions' observed counts, so every fit, part and diagnosis and the model are read again.
 */
export function blindingChanged(queryClient: QueryClient, slug: string, log: BlindingLog) {
  queryClient.setQueryData(queryKeys.blinding(slug), log);
  void queryClient.invalidateQueries({ queryKey: queryKeys.blindingChecklist(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.fits(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.model(slug) });
}
