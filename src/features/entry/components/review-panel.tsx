import { useId, useState } from 'react';
import type { EntryDetail, ReviewAction } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { ENTRY_STATE_META, EntryStateBadge } from '../../../components/status/entry-state';
import { useReviewEntry } from '../api/review-entry';

type Step = ReviewAction['action'];

const STEPS: { action: Step; can: keyof EntryDetail['can']; label: string; variant: 'primary' | 'secondary' | 'danger'; explain: string }[] = [
  { action: 'submit', can: 'submit', label: 'Submit for review', variant: 'primary', explain: 'Conveners are told by e-mail and review it.' },
  { action: 'accept', can: 'accept', label: 'Accept', variant: 'primary', explain: 'The entry is reviewed and accepted; its owner is told.' },
  { action: 'send_back', can: 'sendBack', label: 'Send back', variant: 'danger', explain: 'Returns the entry to its owner; a comment saying why is required.' },
  { action: 'retire', can: 'retire', label: 'Retire', variant: 'secondary', explain: 'Takes the entry out of the model; it stays on record.' },
  { action: 'reopen', can: 'reopen', label: 'Reopen', variant: 'secondary', explain: 'Brings the entry back as a draft.' },
];

export function ReviewPanel({ slug, entry }: { slug: string; entry: EntryDetail }) {
  const [comment, setComment] = useState('');
  const [missing, setMissing] = useState(false);
  const review = useReviewEntry(slug, entry.key);
  const commentId = useId();
  const allowed = STEPS.filter((s) => entry.can[s.can]);

  const run = (action: Step) => {
    if (action === 'send_back' && !comment.trim()) {
      setMissing(true);
      document.getElementById(commentId)?.focus();
      return;
    }
    setMissing(false);
    review.mutate({ action, comment: comment.trim() }, { onSuccess: () => setComment('') });
  };

  return (
    <div className="flex flex-col gap-3">
      <div className="flex items-center gap-2">
        <EntryStateBadge state={entry.state} />
        <span className="text-sm text-ink-soft">{ENTRY_STATE_META[entry.state].meaning}.</span>
      </div>
      {allowed.length === 0 ? (
        <p className="text-xs text-ink-muted">Your role has no review step to take on this entry in its present state.</p>
      ) : (
        <>
          <div className="flex flex-col gap-1">
            <label htmlFor={commentId} className="text-xs font-semibold text-ink-soft">
              Comment{entry.can.sendBack ? ' (required to send back)' : ' (optional)'}
            </label>
            <textarea
              id={commentId}
              rows={3}
              value={comment}
              onChange={(e) => {
                setComment(e.target.value);
                if (e.target.value.trim()) setMissing(false);
              }}
              aria-invalid={missing || undefined}
              aria-describedby={missing ? `${commentId}-error` : undefined}
              className={`block w-full rounded-md border bg-paper-raised px-2.5 py-1.5 text-sm ${missing ? 'border-danger' : 'border-rule-strong'}`}
            />
            {missing && (
              <p id={`${commentId}-error`} className="text-xs font-medium text-danger">
                Say why the entry goes back: the owner reads this comment.
              </p>
            )}
          </div>
          <FormError error={review.error} />
          <div className="flex flex-wrap gap-2">
            {allowed.map((s) => (
              <Button key={s.action} variant={s.variant} title={s.explain} busy={review.isPending && review.variables?.action === s.action} disabled={review.isPending} onClick={() => run(s.action)}>
                {s.label}
              </Button>
            ))}
          </div>
        </>
      )}
    </div>
  );
}
