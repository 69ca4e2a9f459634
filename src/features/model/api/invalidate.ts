import type { QueryClient } from '@tanstack/react-query';
import { analysisQueryKey } from '../../analyses/api/get-analysis';
import { entriesQueryKey } from '../../register/api/get-entries';
import { modelQueryKey } from './get-model';

/** A model change moves the model, the overview's counts, and the register (its effects name regions and processes). */
export function invalidateModel(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: modelQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: analysisQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: entriesQueryKey(slug) });
}
