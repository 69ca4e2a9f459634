import { Link, useParams } from 'react-router';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useCan } from '../../../features/analyses/use-can';
import { useQuestion } from '../../../features/questions/api/get-question';
import { QuestionThread } from '../../../features/questions/components/question-thread';

export function QuestionRoute() {
  const { slug = '', id = '' } = useParams();
  const question = useQuestion(slug, Number(id));
  const can = useCan(slug);
  return (
    <QueryView query={question} loadingLabel="Loading the question…">
      {(q) => (
        <>
          <PageHeader
            title={q.title}
            description={`Question #${q.id} on ${q.entry.label || q.entry.key}`}
            actions={
              <Link to={`/a/${slug}/questions`} className="text-sm font-medium text-teal-ink hover:underline">
                All questions
              </Link>
            }
          />
          <div className="max-w-3xl">
            <QuestionThread slug={slug} question={q} mayAnswer={can('question.answer')} mayResolve={can('question.resolve')} />
          </div>
        </>
      )}
    </QueryView>
  );
}
