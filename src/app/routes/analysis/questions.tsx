import { useMemo } from 'react';
import { useParams, useSearchParams } from 'react-router';
import type { QuestionFilter } from '@shared/schemas/review';
import { PageHeader } from '../../../components/ui/page';
import { EmptyState } from '../../../components/ui/empty-state';
import { QueryView } from '../../../components/ui/query-view';
import { useFits } from '../../../features/fits/api/get-fits';
import { useMembers } from '../../../features/members/api/get-members';
import { useQuestions } from '../../../features/questions/api/get-questions';
import { filterFromParams, QuestionFilters } from '../../../features/questions/components/question-filters';
import { QuestionsTable } from '../../../features/questions/components/questions-table';
import { useEntries, useEntryGroups } from '../../../features/register/api/get-entries';
import { useModel } from '../../../features/model/api/get-model';
import { useVersions } from '../../../features/fits/api/get-versions';
import { useCan } from '../../../features/analyses/use-can';
import { AskQuestionForm, type SubjectChoices } from '../../../features/questions/components/ask-question-form';
import { Panel } from '../../../components/ui/page';
import { fitName } from '../../../lib/fits';

export function QuestionsRoute() {
  const { slug = '' } = useParams();
  const [params, setParams] = useSearchParams();
  const filter = useMemo(() => filterFromParams(params), [params]);
  const questions = useQuestions(slug, filter);
  const members = useMembers(slug);
  const entries = useEntries(slug);
  const fits = useFits(slug);
  const model = useModel(slug);
  const versions = useVersions(slug);
  const mayAsk = useCan(slug)('question.raise');
  const subjects = useMemo((): SubjectChoices | null => {
    if (!model.data || !fits.data || !versions.data) return null;
    return {
      parameters: (entries.data ?? []).map((e) => e.key),
      regions: model.data.regions.map((r) => ({ key: r.key, bins: r.edges.length - 1 })),
      fits: fits.data.filter((f) => f.state === 'succeeded').map((f) => ({ id: f.id, label: fitName(f) })),
      versions: versions.data.map((v) => v.number),
    };
  }, [model.data, fits.data, versions.data, entries.data]);

  const owners = useMemo(() => {
    const seen = new Map<number, string>();
    for (const e of entries.data ?? []) if (e.owner) seen.set(e.owner.id, e.owner.name);
    for (const m of members.data ?? []) if (!seen.has(m.userId) && m.role !== 'reader') seen.set(m.userId, m.name);
    return [...seen].map(([id, name]) => ({ value: String(id), label: name })).sort((a, b) => a.label.localeCompare(b.label));
  }, [entries.data, members.data]);
  const groups = useEntryGroups(entries.data);
  const fitChoices = useMemo(() => (fits.data ?? []).filter((f) => f.state === 'succeeded').map((f) => ({ value: String(f.id), label: `#${f.id} ${f.label || ''}`.trim() })), [fits.data]);

  const change = (key: keyof QuestionFilter, value: string) =>
    setParams(
      (p) => {
        const next = new URLSearchParams(p);
        if (value) next.set(key, value);
        else next.delete(key);
        return next;
      },
      { replace: true },
    );
  const filtered = Object.keys(filter).length > 0;

  return (
    <>
      <PageHeader
        title="Questions"
        description="Every reviewer's questions, on a parameter, a region or one of its bins, a fit or a model version, with their answers, evidence and resolution. Newest activity first."
      />
      {mayAsk && subjects && (
        <details className="mb-4">
          <summary className="cursor-pointer text-sm font-semibold text-teal-ink">Ask a question</summary>
          <div className="mt-2 max-w-3xl">
            <Panel>
              <AskQuestionForm slug={slug} choices={subjects} />
            </Panel>
          </div>
        </details>
      )}
      <div className="mb-4">
        <QuestionFilters filter={filter} owners={owners} groups={groups} fits={fitChoices} onChange={change} />
      </div>
      <QueryView query={questions} loadingLabel="Loading the questions…">
        {(list) =>
          list.length === 0 ? (
            <EmptyState title={filtered ? 'No question matches these filters' : 'No questions yet'}>
              <p>
                {filtered
                  ? 'Clear a filter to see more.'
                  : 'Any member asks a question here, on a parameter from its diagnosis, the impact ranking or its register entry, or on a region, a bin, a fit or a model version; the people who answer are e-mailed.'}
              </p>
            </EmptyState>
          ) : (
            <>
              <p className="mb-2 text-xs text-ink-muted" aria-live="polite">
                {list.length} question{list.length === 1 ? '' : 's'}
                {filtered ? ' match these filters' : ''}; {list.filter((q) => q.state !== 'resolved').length} not yet resolved.
              </p>
              <QuestionsTable slug={slug} questions={list} />
            </>
          )
        }
      </QueryView>
    </>
  );
}
