import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PlotLabels } from '@shared/schemas/api';
import { analysisPath, api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** A convener sets the labels every chart of the analysis carries. */
export function setPlotLabels(slug: string, body: PlotLabels): Promise<PlotLabels> {
  return api.put<PlotLabels>(analysisPath(slug, 'plot-labels'), body);
}

export function useSetPlotLabels(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({ mutationFn: (body: PlotLabels) => setPlotLabels(slug, body), onSuccess: () => queryClient.invalidateQueries({ queryKey: queryKeys.overview(slug) }) });
}
