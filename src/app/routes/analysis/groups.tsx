import { useParams } from 'react-router';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useCan } from '../../../features/analyses/use-can';
import { useGroups } from '../../../features/groups/api/get-groups';
import { GroupsBoard } from '../../../features/groups/components/groups-board';
import { useEntries } from '../../../features/register/api/get-entries';

export function GroupsRoute() {
  const { slug = '' } = useParams();
  const groups = useGroups(slug);
  const entries = useEntries(slug);
  const editable = useCan(slug)('groups.edit');
  return (
    <>
      <PageHeader
        title="Groups"
        description={
          editable
            ? 'How the systematics are grouped; grouped impacts of a fit add up each group. Drag an entry by its handle to another group, with the pointer or the keyboard.'
            : 'How the systematics are grouped; grouped impacts of a fit add up each group. Analysts arrange them.'
        }
      />
      <QueryView query={groups} loadingLabel="Loading the groups…">
        {(view) => <GroupsBoard slug={slug} view={view} entries={entries.data ?? []} editable={editable} />}
      </QueryView>
    </>
  );
}
