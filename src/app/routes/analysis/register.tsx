import { useParams } from 'react-router';
import { useEntries } from '../../../features/register/api/get-entries';
import { RegisterTable } from '../../../features/register/components/register-table';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';

export function RegisterRoute() {
  const { slug = '' } = useParams();
  const entries = useEntries(slug);
  return (
    <>
      <PageHeader
        title="Register"
        description="Every systematic uncertainty of the analysis: what it is, who owns it, what it touches and where it stands in review. Sort by any column; filter by any text."
      />
      <QueryView query={entries} loadingLabel="Loading the register…">
        {(list) => <RegisterTable slug={slug} entries={list} />}
      </QueryView>
    </>
  );
}
