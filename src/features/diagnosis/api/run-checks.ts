import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { Diagnosis } from '@shared/schemas/review';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

type Checks = Diagnosis['checks'];

/** Queue the parameter's checks (split by region, strongest partner held); the server answers 202 with every check of the parameter so far. */
export function runChecks(slug: string, fitId: number, parameter: string): Promise<Checks> {
  return api.post<Checks>(analysisPath(slug, 'fits', fitId, 'diagnosis', parameter, 'checks'), {});
}

export function useRunChecks(slug: string, fitId: number, parameter: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => runChecks(slug, fitId, parameter),
    onSuccess: (checks) => {
      // the diagnosis then polls while a check runs
      queryClient.setQueryData<Diagnosis>(queryKeys.diagnosis(slug, fitId, parameter), (old) => (old ? { ...old, checks } : old));
      void queryClient.invalidateQueries({ queryKey: queryKeys.fits(slug), exact: true });
    },
  });
}
