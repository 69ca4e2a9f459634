import { useState } from 'react';
import { useNavigate, useParams } from 'react-router';
import { useEntries, useEntryGroups } from '../../../features/register/api/get-entries';
import { RegisterTable } from '../../../features/register/components/register-table';
import { NewEntryForm } from '../../../features/register/components/new-entry-form';
import { useCan } from '../../../features/analyses/use-can';
import { useMembers } from '../../../features/members/api/get-members';
import { Button } from '../../../components/ui/button';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function RegisterRoute() {
  const { slug = '' } = useParams();
  const entries = useEntries(slug);
  const canCreate = useCan(slug)('entry.create');
  const [creating, setCreating] = useState(false);
  const members = useMembers(slug);
  const navigate = useNavigate();
  const groups = useEntryGroups(entries.data);

  return (
    <>
      <PageHeader
        title="Register"
        description="Every systematic uncertainty of the analysis: what it is, who owns it, what it touches and where it stands in review. Sort by any column; filter by text, group, owner or state."
        actions={
          canCreate && !creating ? (
            <Button variant="primary" onClick={() => setCreating(true)}>
              New entry
            </Button>
          ) : undefined
        }
      />
      {creating && (
        <Panel title="New entry" className="mb-5">
          <NewEntryForm
            slug={slug}
            members={members.data ?? []}
            groups={groups}
            onCancel={() => setCreating(false)}
            onCreated={(key) => navigate(`/a/${slug}/entries/${encodeURIComponent(key)}`)}
          />
        </Panel>
      )}
      <QueryView query={entries} loadingLabel="Loading the register…">
        {(list) => <RegisterTable slug={slug} entries={list} />}
      </QueryView>
    </>
  );
}
