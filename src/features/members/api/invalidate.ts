import type { QueryClient } from '@tanstack/react-query';
import { membersQueryKey } from './get-members';
import { analysisQueryKey } from '../../analyses/api/get-analysis';
import { analysesQueryKey } from '../../analyses/api/get-analyses';

/** Membership changes move the member list, the overview's member count and the analyses list. */
export function invalidateMembership(queryClient: QueryClient, slug: string) {
  void queryClient.invalidateQueries({ queryKey: membersQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: analysisQueryKey(slug) });
  void queryClient.invalidateQueries({ queryKey: analysesQueryKey, exact: true });
}
