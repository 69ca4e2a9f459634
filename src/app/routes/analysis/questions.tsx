import { useParams } from 'react-router';
import { PageHeader } from '../../../components/ui/page';
import { EmptyState } from '../../../components/ui/empty-state';
import { useAnalysis } from '../../../features/analyses/api/get-analysis';

export function QuestionsRoute() {
  const { slug = '' } = useParams();
  const open = useAnalysis(slug).data?.openQuestions;
  return (
    <>
      <PageHeader title="Questions" description="Reviewers' questions on fit results and parameters, with their answers and resolution." />
      <EmptyState title="The question queue" notBuilt>
        <p>
          Questions raised by conveners on a parameter of a fit result will queue here, oldest first, with the parameter, the entry's owner, the answers
          and whether the question is resolved.
        </p>
        {open !== undefined && <p>The overview counts {open} open question{open === 1 ? '' : 's'} in this analysis.</p>}
      </EmptyState>
    </>
  );
}
