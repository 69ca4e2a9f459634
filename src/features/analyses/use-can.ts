import type { Action } from '@shared/permissions';
import { useAnalysis } from './api/get-analysis';

/**
 * Whether the caller may do `action` in this analysis, from the overview's `permissions`.
 * Used only to hide controls: the server decides every request on its own.
 */
export function useCan(slug: string): (action: Action) => boolean {
  const { data } = useAnalysis(slug);
  const allowed = new Set(data?.permissions ?? []);
  return (action) => allowed.has(action);
}
