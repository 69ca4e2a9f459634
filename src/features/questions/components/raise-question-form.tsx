import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import type { QuestionDetail } from '@shared/schemas/review';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { CheckboxField, TextAreaField, TextField } from '../../../components/ui/field';
import { isApiRequestError } from '../../../lib/api-client';
import { fitName } from '../../../lib/fits';
import { useRaiseQuestion } from '../api/raise-question';

/**
 * A member's question on one parameter, optionally tied to the fit it was seen in. The server
 * e-mails the entry's owner and the analysts.
 */
export function RaiseQuestionForm({
  slug,
  entry,
  fit,
  defaultTitle = '',
  onDone,
  onCancel,
}: {
  slug: string;
  entry: string;
  fit: { id: number; label: string } | null;
  defaultTitle?: string;
  onDone?: (q: QuestionDetail) => void;
  onCancel?: () => void;
}) {
  const raise = useRaiseQuestion(slug);
  const [title, setTitle] = useState(defaultTitle);
  const [body, setBody] = useState('');
  const [tied, setTied] = useState(fit !== null);
  const [raised, setRaised] = useState<QuestionDetail | null>(null);
  const err = isApiRequestError(raise.error) ? raise.error : null;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    raise.mutate(
      { entry, fitId: tied && fit ? fit.id : null, title, body },
      {
        onSuccess: (q) => {
          setRaised(q);
          setTitle(defaultTitle);
          setBody('');
          onDone?.(q);
        },
      },
    );
  };

  return (
    <form onSubmit={submit} aria-label={`Raise a question on ${entry}`} className="flex flex-col gap-3">
      {raised && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          Question raised; the entry’s owner and the analysts have been e-mailed.{' '}
          <Link to={`/a/${slug}/questions/${raised.id}`} className="font-semibold underline">
            Open the thread
          </Link>
        </p>
      )}
      <FormError error={raise.error} />
      <TextField label="Title" value={title} onChange={(e) => setTitle(e.target.value)} required minLength={3} maxLength={200} error={err?.fieldMessage('title')} />
      <TextAreaField label="Question" rows={4} value={body} onChange={(e) => setBody(e.target.value)} required error={err?.fieldMessage('body')} hint="Say what you see and what you would like explained." />
      {fit && <CheckboxField label={`Tie it to this fit (${fitName(fit)})`} checked={tied} onChange={(e) => setTied(e.target.checked)} hint="The thread then links to this fit's diagnosis of the parameter." />}
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={raise.isPending}>
          Raise the question
        </Button>
        {onCancel && (
          <Button variant="ghost" onClick={onCancel}>
            Close
          </Button>
        )}
      </div>
    </form>
  );
}
