import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import type { QuestionDetail } from '@shared/schemas/review';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextAreaField } from '../../../components/ui/field';
import { Panel } from '../../../components/ui/page';
import { isApiRequestError } from '../../../lib/api-client';
import { formatDateTime } from '../../../lib/format';
import { diagnosisPath, fitName } from '../../../lib/fits';
import { useAnswerQuestion } from '../api/answer-question';
import { useStepQuestion } from '../api/step-question';
import { QuestionStateBadge } from './question-state-badge';

function Byline({ name, at }: { name: string | null; at: string }) {
  return (
    <p className="text-xs text-ink-muted">
      <span className="font-semibold text-ink-soft">{name ?? 'a former member'}</span> · <time dateTime={at}>{formatDateTime(at)}</time>
    </p>
  );
}

function AnswerForm({ slug, id }: { slug: string; id: number }) {
  const answer = useAnswerQuestion(slug, id);
  const [body, setBody] = useState('');
  const err = isApiRequestError(answer.error) ? answer.error : null;
  const submit = (e: FormEvent) => {
    e.preventDefault();
    answer.mutate({ body }, { onSuccess: () => setBody('') });
  };
  return (
    <form onSubmit={submit} aria-label="Answer" className="flex flex-col gap-2">
      <FormError error={answer.error} />
      <TextAreaField label="Your answer" rows={4} value={body} onChange={(e) => setBody(e.target.value)} required error={err?.fieldMessage('body')} hint="Point to the evidence: a plot, a bin, a reference." />
      <div>
        <Button type="submit" variant="primary" busy={answer.isPending}>
          Post the answer
        </Button>
      </div>
    </form>
  );
}

function StepForm({ slug, q }: { slug: string; q: QuestionDetail }) {
  const step = useStepQuestion(slug, q.id);
  const [note, setNote] = useState('');
  const resolved = q.state === 'resolved';
  return (
    <div className="flex flex-col gap-2">
      <FormError error={step.error} />
      <TextAreaField
        label={resolved ? 'Note on reopening (optional)' : 'Note on resolving (optional)'}
        rows={2}
        value={note}
        onChange={(e) => setNote(e.target.value)}
        hint="Added to the thread."
      />
      <div>
        <Button variant={resolved ? 'secondary' : 'primary'} busy={step.isPending} onClick={() => step.mutate({ step: resolved ? 'reopen' : 'resolve', note }, { onSuccess: () => setNote('') })}>
          {resolved ? 'Reopen the question' : 'Resolve the question'}
        </Button>
      </div>
    </div>
  );
}

/** A question with its thread, the answer form for those who may answer, and resolve or reopen for a convener. */
export function QuestionThread({ slug, question: q, mayAnswer, mayResolve }: { slug: string; question: QuestionDetail; mayAnswer: boolean; mayResolve: boolean }) {
  return (
    <div className="flex flex-col gap-4">
      <Panel>
        <div className="flex flex-col gap-2">
          <div className="flex flex-wrap items-center gap-2 text-xs text-ink-muted">
            <QuestionStateBadge state={q.state} />
            <span>
              on{' '}
              <Link to={`/a/${slug}/entries/${encodeURIComponent(q.entry.key)}`} className="font-mono text-teal-ink hover:underline">
                {q.entry.key}
              </Link>{' '}
              ({q.entry.label}) · owner {q.entry.owner?.name ?? 'unassigned'}
            </span>
            {q.fit && (
              <span>
                · raised on{' '}
                <Link to={diagnosisPath(slug, q.fit.id, q.entry.key)} className="text-teal-ink hover:underline">
                  {fitName(q.fit)}: the diagnosis of {q.entry.key}
                </Link>
              </span>
            )}
          </div>
          <Byline name={q.author?.name ?? null} at={q.createdAt} />
          <p className="text-sm whitespace-pre-wrap text-ink">{q.body}</p>
          {q.state === 'resolved' && q.resolvedAt && (
            <p className="text-xs text-ink-muted">
              Resolved by {q.resolvedBy?.name ?? 'a convener'} on {formatDateTime(q.resolvedAt)}.
            </p>
          )}
        </div>
      </Panel>

      <section aria-label="Thread" className="flex flex-col gap-2">
        <h2 className="text-sm font-semibold text-ink">
          {q.thread.length === 0 ? 'No answers yet' : `Thread (${q.thread.length})`}
        </h2>
        <ol className="flex flex-col gap-2">
          {q.thread.map((a) => (
            <li key={a.id} className="rounded-lg border border-rule bg-paper-raised px-4 py-2">
              <Byline name={a.author?.name ?? null} at={a.createdAt} />
              <p className="mt-1 text-sm whitespace-pre-wrap">{a.body}</p>
            </li>
          ))}
        </ol>
      </section>

      {mayAnswer && q.state !== 'resolved' && (
        <Panel title="Answer">
          <AnswerForm slug={slug} id={q.id} />
        </Panel>
      )}
      {mayAnswer && q.state === 'resolved' && !mayResolve && <p className="text-sm text-ink-muted">This question is resolved; a convener can reopen it.</p>}
      {mayResolve && (
        <Panel title={q.state === 'resolved' ? 'Reopen' : 'Resolve'}>
          <StepForm slug={slug} q={q} />
        </Panel>
      )}
    </div>
  );
}
