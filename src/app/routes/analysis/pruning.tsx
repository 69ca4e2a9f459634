import { Link, useParams } from 'react-router';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useCan } from '../../../features/analyses/use-can';
import { usePruning } from '../../../features/pruning/api/get-pruning';
import { PruningScreen } from '../../../features/pruning/components/pruning-screen';

export function PruningRoute() {
  const { slug = '' } = useParams();
  const pruning = usePruning(slug);
  const mayEdit = useCan(slug)('model.edit');
  return (
    <>
      <PageHeader
        title="Pruning"
        description="Which effects can be dropped without changing the result, and what dropping them changes: the rules propose, a preview refits the latest fit without your selection, and pruning needs a comment and can be undone."
        actions={
          <Link to={`/a/${slug}/register`} className="text-sm font-medium text-teal-ink hover:underline">
            The register
          </Link>
        }
      />
      <QueryView query={pruning} loadingLabel="Assessing every effect against the rules…">
        {(overview) => <PruningScreen slug={slug} overview={overview} mayEdit={mayEdit} />}
      </QueryView>
    </>
  );
}
