import { Link, useParams } from 'react-router';
import { EmptyState } from '../../../components/ui/empty-state';
import { PageHeader } from '../../../components/ui/page';
import { useEntries } from '../../../features/register/api/get-entries';
import { EntryStateBadge } from '../../../features/register/components/entry-state-badge';

export function EntryRoute() {
  const { slug = '', key = '' } = useParams();
  // The register list is usually cached already; it names the entry and its state.
  const entries = useEntries(slug);
  const entry = entries.data?.find((e) => e.key === key);
  return (
    <>
      <PageHeader
        title={
          <span className="flex flex-wrap items-center gap-3">
            {entry?.label ?? key}
            {entry && <EntryStateBadge state={entry.state} />}
          </span>
        }
        description={<span className="font-mono">{key}</span>}
        actions={
          <Link to={`/a/${slug}/register`} className="text-sm font-medium text-teal-ink hover:underline">
            Back to the register
          </Link>
        }
      />
      <EmptyState title="Entry details" notBuilt>
        <p>
          This page will hold the entry's description, justification and references; its owner and group; the up/down variation previews over nominal per
          bin for every region and process it affects; its validation warnings; the full revision history with author and time; and the questions raised on it.
        </p>
      </EmptyState>
    </>
  );
}
