import type { QueryClient } from '@tanstack/react-query';
import { queryKeys } from '../../../lib/query-keys';

/** A model change moves the model, the overview's counts, and the register (its effects name regions and processes). */
export function invalidateModel(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: queryKeys.model(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) });
  void queryClient.invalidateQueries({ queryKey: queryKeys.entries(slug) });
}
