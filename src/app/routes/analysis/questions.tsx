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

export function QuestionsRoute() {
  const { slug = '' } = useParams();
  const [params, setParams] = useSearchParams();
  const filter = useMemo(() => filterFromParams(params), [params]);
  const questions = useQuestions(slug, filter);
  const members = useMembers(slug);
  const entries = useEntries(slug);
  const fits = useFits(slug);

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
      <PageHeader title="Questions" description="Reviewers' questions on parameters and fit results, with their answers and resolution. Newest activity first." />
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
                  : 'A convener raises a question on a parameter from its diagnosis, from the impact ranking or from its register entry; the owner and the analysts are e-mailed.'}
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
