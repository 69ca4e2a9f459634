import type { QueryClient } from '@tanstack/react-query';
import type { BlindingLog } from '@shared/schemas/review';
import { analysisQueryKey } from '../../analyses/api/get-analysis';
import { fitKeys } from '../../fits/api/keys';
import { modelQueryKey } from '../../model/api/get-model';
import { blindingQueryKey } from './get-blinding';

/**
 * The blinding state changed: the overview shows it, and once unblinded the server sends the
 * signal regions' observed counts, so every fit, part and diagnosis and the model are read again.
 */
export function blindingChanged(queryClient: QueryClient, slug: string, log: BlindingLog) {
  queryClient.setQueryData(blindingQueryKey(slug), log);
  void queryClient.invalidateQueries({ queryKey: analysisQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: fitKeys.fits(slug) });
  void queryClient.invalidateQueries({ queryKey: modelQueryKey(slug) });
}
