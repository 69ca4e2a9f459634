import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { GroupsView } from '@shared/schemas/register';
import { analysisPath, api } from '../../../lib/api-client';
import { invalidateGroups } from './invalidate';
import { queryKeys } from '../../../lib/query-keys';

export function moveEntry(slug: string, key: string, groupId: number | null): Promise<GroupsView> {
  return api.put<GroupsView>(analysisPath(slug, 'entries', key, 'group'), { groupId });
}

/** The board as it looks after moving `key` into `groupId` (null: ungrouped), appended at the end. */
export function withEntryMoved(view: GroupsView, key: string, groupId: number | null): GroupsView {
  const drop = (keys: string[]) => keys.filter((k) => k !== key);
  return {
    groups: view.groups.map((g) => ({ ...g, entries: g.id === groupId ? [...drop(g.entries), key] : drop(g.entries) })),
    ungrouped: groupId === null ? [...drop(view.ungrouped), key] : drop(view.ungrouped),
  };
}

/** Moves show at once; a refusal puts the board back as it was and reports the server's words. */
export function useMoveEntry(slug: string) {
  const queryClient = useQueryClient();
  const key = queryKeys.groups(slug);
  return useMutation({
    mutationFn: ({ entry, groupId }: { entry: string; groupId: number | null }) => moveEntry(slug, entry, groupId),
    onMutate: async ({ entry, groupId }) => {
      await queryClient.cancelQueries({ queryKey: key });
      const before = queryClient.getQueryData<GroupsView>(key);
      if (before) queryClient.setQueryData(key, withEntryMoved(before, entry, groupId));
      return { before };
    },
    onError: (_e, _v, context) => {
      if (context?.before) queryClient.setQueryData(key, context.before);
    },
    onSuccess: (view) => queryClient.setQueryData(key, view),
    onSettled: () => invalidateGroups(queryClient, slug),
  });
}
