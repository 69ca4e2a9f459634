import { useState, type ReactNode } from 'react';
import { Button } from './button';
import { FormError } from './error-notice';

/** A destructive action asked twice: the button, then "question? Confirm / Keep", with the refusal shown beneath. */
export function ConfirmButton({
  label,
  question,
  confirmLabel,
  onConfirm,
  busy,
  error,
  onCancel,
  ariaLabel,
  align = 'end',
}: {
  label: string;
  question: ReactNode;
  confirmLabel: string;
  onConfirm: () => void;
  busy?: boolean;
  error?: unknown;
  onCancel?: () => void;
  ariaLabel?: string;
  /** Which side the button and the question keep to. */
  align?: 'start' | 'end';
}) {
  const [asking, setAsking] = useState(false);
  const end = align === 'end';
  return (
    <div className={`flex flex-col gap-1 ${end ? 'items-end' : 'items-start'}`}>
      {asking ? (
        <div className={`flex flex-wrap items-center gap-1.5 ${end ? 'justify-end' : ''}`}>
          <span className="text-xs text-ink-soft">{question}</span>
          <Button size="sm" variant="danger" busy={busy} onClick={onConfirm}>
            {confirmLabel}
          </Button>
          <Button
            size="sm"
            variant="ghost"
            onClick={() => {
              setAsking(false);
              onCancel?.();
            }}
          >
            Keep
          </Button>
        </div>
      ) : (
        <Button size="sm" variant="ghost" aria-label={ariaLabel} onClick={() => setAsking(true)}>
          {label}
        </Button>
      )}
      {error ? (
        <div className="max-w-sm text-left">
          <FormError error={error} />
        </div>
      ) : null}
    </div>
  );
}
