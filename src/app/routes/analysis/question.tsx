import { Link, useParams } from 'react-router';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useCan } from '../../../features/analyses/use-can';
import { useQuestion } from '../../../features/questions/api/get-question';
import { QuestionThread, type EvidenceChoices } from '../../../features/questions/components/question-thread';
import { useFits } from '../../../features/fits/api/get-fits';
import { useVersions } from '../../../features/fits/api/get-versions';
import { useEntries } from '../../../features/register/api/get-entries';
import { fitName, variantInWords } from '../../../lib/fits';

/** The fits, variants, versions and parameters an answer may attach as evidence. */
function useEvidenceChoices(slug: string): EvidenceChoices | undefined {
  const fits = useFits(slug);
  const versions = useVersions(slug);
  const register = useEntries(slug);
  if (!fits.data || !versions.data) return undefined;
  return {
    fits: fits.data.filter((f) => f.state === 'succeeded').map((f) => ({ id: f.id, label: fitName(f), variant: variantInWords(f.options).length > 0 })),
    versions: versions.data.map((v) => v.number),
    parameters: register.data?.map((e) => e.key) ?? [],
  };
}

export function QuestionRoute() {
  const { slug = '', id = '' } = useParams();
  const question = useQuestion(slug, Number(id));
  const can = useCan(slug);
  const choices = useEvidenceChoices(slug);
  return (
    <QueryView query={question} loadingLabel="Loading the question…">
      {(q) => (
        <>
          <PageHeader
            title={q.title}
            description={`Question #${q.id} on ${q.entry ? q.entry.label || q.entry.key : q.about.label}`}
            actions={
              <Link to={`/a/${slug}/questions`} className="text-sm font-medium text-teal-ink hover:underline">
                All questions
              </Link>
            }
          />
          <div className="max-w-3xl">
            <QuestionThread slug={slug} question={q} mayAnswer={can('question.answer')} mayResolve={can('question.resolve')} choices={choices} />
          </div>
        </>
      )}
    </QueryView>
  );
}
