import { useId, type InputHTMLAttributes, type ReactNode, type SelectHTMLAttributes, type TextareaHTMLAttributes } from 'react';

const control =
  'block w-full rounded-md border bg-paper-raised px-2.5 py-1.5 text-sm text-ink placeholder:text-ink-muted/70 focus-visible:outline-2 focus-visible:outline-teal';

function controlClass(error?: string) {
  return `${control} ${error ? 'border-danger' : 'border-rule-strong'}`;
}

type Common = { label: string; error?: string; hint?: ReactNode; className?: string };

function FieldShell({ id, label, error, hint, className = '', children }: Common & { id: string; children: ReactNode }) {
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={id} className="text-xs font-semibold text-ink-soft">
        {label}
      </label>
      {children}
      {hint && !error && (
        <p id={`${id}-hint`} className="text-xs text-ink-muted">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-error`} className="text-xs font-medium text-danger">
          {error}
        </p>
      )}
    </div>
  );
}

function describedBy(id: string, error?: string, hint?: ReactNode) {
  return error ? `${id}-error` : hint ? `${id}-hint` : undefined;
}

export function TextField({ label, error, hint, className, ...input }: Common & InputHTMLAttributes<HTMLInputElement>) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={className}>
      <input id={id} className={controlClass(error)} aria-invalid={error ? true : undefined} aria-describedby={describedBy(id, error, hint)} {...input} />
    </FieldShell>
  );
}

export function TextAreaField({ label, error, hint, className, ...input }: Common & TextareaHTMLAttributes<HTMLTextAreaElement>) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={className}>
      <textarea id={id} className={controlClass(error)} aria-invalid={error ? true : undefined} aria-describedby={describedBy(id, error, hint)} {...input} />
    </FieldShell>
  );
}

export function SelectField({ label, error, hint, className, children, ...select }: Common & SelectHTMLAttributes<HTMLSelectElement>) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={className}>
      <select id={id} className={controlClass(error)} aria-invalid={error ? true : undefined} aria-describedby={describedBy(id, error, hint)} {...select}>
        {children}
      </select>
    </FieldShell>
  );
}

export function CheckboxField({ label, hint, className = '', ...input }: { label: string; hint?: ReactNode; className?: string } & InputHTMLAttributes<HTMLInputElement>) {
  const id = useId();
  return (
    <div className={`flex items-start gap-2 ${className}`}>
      <input id={id} type="checkbox" className="mt-0.5 size-4 accent-teal" aria-describedby={hint ? `${id}-hint` : undefined} {...input} />
      <div>
        <label htmlFor={id} className="text-sm text-ink">
          {label}
        </label>
        {hint && (
          <p id={`${id}-hint`} className="text-xs text-ink-muted">
            {hint}
          </p>
        )}
      </div>
    </div>
  );
}
