import type { QueryClient } from '@tanstack/react-query';
import { queryKeys } from '../../../lib/query-keys';

/** A model change moves the model, the overview's counts, and the register (its effects name regions and processes). */
export function invalidateModel(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: queryKeys.model(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
}

/** A change of the signal hypotheses moves their list only (the model's own templates stay). */
export function invalidateHypotheses(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: queryKeys.signalHypotheses(slug) });
}
