import { Link } from 'react-router';
import { formatDateTime, plural } from '../../../lib/format';
import { useQuestions } from '../api/get-questions';
import { QuestionStateBadge } from './question-state-badge';
import { QueryView } from '../../../components/ui/query-view';

/** The threads on one register entry, newest activity first, each opening its thread. */
export function EntryQuestions({ slug, entry }: { slug: string; entry: string }) {
  const query = useQuestions(slug, { entry });
  return (
    <QueryView query={query} loadingLabel="Loading the questions…">
      {(list) =>
        list.length === 0 ? (
          <p className="text-sm text-ink-muted">No question has been raised on this parameter.</p>
        ) : (
          <ul aria-label={`Questions on ${entry}`} className="flex flex-col divide-y divide-rule">
            {list.map((q) => (
              <li key={q.id} className="flex flex-wrap items-center gap-x-3 gap-y-1 py-1.5 text-sm">
                <QuestionStateBadge state={q.state} />
                <Link to={`/a/${slug}/questions/${q.id}`} className="font-medium text-teal-ink hover:underline">
                  {q.title}
                </Link>
                <span className="text-xs text-ink-muted">
                  {q.author ? `asked by ${q.author.name}` : 'asked'} · {plural(q.answers, 'answer')} · last activity {formatDateTime(q.lastActivity)}
                  {q.fit ? ` · on ${q.fit.label || `fit ${q.fit.id}`}` : ''}
                </span>
              </li>
            ))}
          </ul>
        )
      }
    </QueryView>
  );
}
