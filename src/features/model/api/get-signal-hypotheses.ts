import { queryOptions, useQuery } from '@tanstack/react-query';
import type { SignalHypotheses } from '@shared/schemas/signal-hypotheses';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** The signal hypotheses by value, with their parameter and what any of them lacks since the model changed. */
export function getSignalHypotheses(slug: string): Promise<SignalHypotheses> {
  return api.get<SignalHypotheses>(analysisPath(slug, 'signal-hypotheses'));
}

export const signalHypothesesQueryOptions = (slug: string) => queryOptions({ queryKey: queryKeys.signalHypotheses(slug), queryFn: () => getSignalHypotheses(slug) });

export function useSignalHypotheses(slug: string) {
  return useQuery(signalHypothesesQueryOptions(slug));
}
