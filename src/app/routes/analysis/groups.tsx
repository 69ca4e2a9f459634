import { PageHeader } from '../../../components/ui/page';
import { EmptyState } from '../../../components/ui/empty-state';

export function GroupsRoute() {
  return (
    <>
      <PageHeader title="Groups" description="How the register's systematics are grouped for grouped impacts." />
      <EmptyState title="Arranging entries into groups" notBuilt>
        <p>
          Each group of systematics will appear here as a column of its entries; analysts will drag an entry from one group to another, and every move is
          kept as a revision of the entry. Until then, each entry's group is shown in the register.
        </p>
      </EmptyState>
    </>
  );
}
