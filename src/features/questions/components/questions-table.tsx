import { Link } from 'react-router';
import type { QuestionSummary } from '@shared/schemas/review';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatDateTime } from '../../../lib/format';
import { diagnosisPath, fitName } from '../../../lib/fits';
import { QuestionStateBadge } from './question-state-badge';

/** The question queue: one row per question, newest activity first; the title opens its thread. */
export function QuestionsTable({ slug, questions }: { slug: string; questions: QuestionSummary[] }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
      <table className={tableClass} aria-label="Questions">
        <thead>
          <tr>
            <th scope="col" className={thClass}>
              Question
            </th>
            <th scope="col" className={thClass}>
              Parameter
            </th>
            <th scope="col" className={thClass}>
              Owner
            </th>
            <th scope="col" className={thClass}>
              Fit
            </th>
            <th scope="col" className={thClass}>
              State
            </th>
            <th scope="col" className={`${thClass} text-right`}>
              Answers
            </th>
            <th scope="col" className={thClass}>
              Last activity
            </th>
          </tr>
        </thead>
        <tbody>
          {questions.map((q) => (
            <tr key={q.id} className="hover:bg-teal-soft/30">
              <td className={tdClass}>
                <Link to={`/a/${slug}/questions/${q.id}`} className="font-medium text-teal-ink hover:underline">
                  {q.title}
                </Link>
                <p className="text-2xs text-ink-muted">
                  {q.author ? `asked by ${q.author.name}` : 'asked'} {formatDateTime(q.createdAt)}
                </p>
              </td>
              <td className={tdClass}>
                <Link to={`/a/${slug}/entries/${encodeURIComponent(q.entry.key)}`} className="font-mono text-xs text-teal-ink hover:underline" title={q.entry.label}>
                  {q.entry.key}
                </Link>
                <p className="text-2xs text-ink-muted">{q.entry.group ?? 'no group'}</p>
              </td>
              <td className={`${tdClass} text-xs`}>{q.entry.owner?.name ?? <span className="text-ink-muted">unassigned</span>}</td>
              <td className={`${tdClass} text-xs`}>
                {q.fit ? (
                  <Link to={diagnosisPath(slug, q.fit.id, q.entry.key)} className="text-teal-ink hover:underline" title="This parameter's diagnosis in the fit the question was raised on">
                    {fitName(q.fit)}
                  </Link>
                ) : (
                  <span className="text-ink-muted">none</span>
                )}
              </td>
              <td className={tdClass}>
                <QuestionStateBadge state={q.state} />
              </td>
              <td className={`${tdClass} text-right tabular-nums`}>{q.answers}</td>
              <td className={`${tdClass} text-xs whitespace-nowrap`}>{formatDateTime(q.lastActivity)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
