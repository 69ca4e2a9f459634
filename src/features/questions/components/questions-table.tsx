import { useMemo } from 'react';
import { Link } from 'react-router';
import type { QuestionSummary } from '@shared/schemas/review';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { diagnosisPath, fitName, fitPath } from '../../../lib/fits';
import { formatDateTime } from '../../../lib/format';
import { QuestionStateBadge } from './question-state-badge';
import { subjectPath } from './evidence';

const col = dataColumns<QuestionSummary>();

function makeColumns(slug: string) {
  return col.columns([
    col.accessor('title', {
      header: 'Question',
      cell: (c) => {
        const q = c.row.original;
        return (
          <>
            <Link to={`/a/${slug}/questions/${q.id}`} className="font-medium text-teal-ink hover:underline">
              {q.title}
            </Link>
            <p className="text-2xs text-ink-muted">
              {q.author ? `asked by ${q.author.name}` : 'asked'} {formatDateTime(q.createdAt)}
            </p>
          </>
        );
      },
    }),
    col.accessor((q) => q.entry?.key ?? q.about.label, {
      id: 'parameter',
      header: 'About',
      cell: (c) => {
        const q = c.row.original;
        return q.entry ? (
          <>
            <Link to={`/a/${slug}/entries/${encodeURIComponent(q.entry.key)}`} className="font-mono text-xs text-teal-ink hover:underline" title={q.entry.label}>
              {q.entry.key}
            </Link>
            <p className="text-2xs text-ink-muted">{q.entry.group ?? 'no group'}</p>
          </>
        ) : (
          <Link to={subjectPath(slug, q)} className="text-xs text-teal-ink hover:underline">
            {q.about.label}
          </Link>
        );
      },
    }),
    col.accessor((q) => q.entry?.owner?.name ?? '', {
      id: 'owner',
      header: 'Owner',
      meta: { cellClass: 'text-xs' },
      cell: (c) => c.getValue() || <span className="text-ink-muted">{c.row.original.entry ? 'unassigned' : '–'}</span>,
    }),
    col.accessor('fit', {
      header: 'Fit',
      meta: { cellClass: 'text-xs' },
      cell: (c) => {
        const q = c.row.original;
        return q.fit ? (
          <Link to={q.entry ? diagnosisPath(slug, q.fit.id, q.entry.key) : fitPath(slug, q.fit.id)} className="text-teal-ink hover:underline" title={q.entry ? "This parameter's diagnosis in the fit the question was raised on" : 'The fit the question is about or was raised on'}>
            {fitName(q.fit)}
          </Link>
        ) : (
          <span className="text-ink-muted">none</span>
        );
      },
    }),
    col.accessor('state', { header: 'State', cell: (c) => <QuestionStateBadge state={c.getValue()} /> }),
    col.accessor('answers', { header: 'Answers', meta: { numeric: true } }),
    col.accessor('lastActivity', { header: 'Last activity', meta: { nowrap: true, cellClass: 'text-xs' }, cell: (c) => formatDateTime(c.getValue()) }),
  ]);
}

/** The question queue: one row per question, newest activity first; the title opens its thread. */
export function QuestionsTable({ slug, questions }: { slug: string; questions: QuestionSummary[] }) {
  const columns = useMemo(() => makeColumns(slug), [slug]);
  return <DataTable columns={columns} data={questions} getRowId={(q) => String(q.id)} label="Questions" />;
}
