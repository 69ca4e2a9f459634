import { useId, type ReactNode } from 'react';

/** A labelled file chooser that shows the chosen file's name and size, and the refusal of what it holds. */
export function FileField({ label, accept, file, onFile, hint, inputKey, error }: { label: string; accept: string; file: File | null; onFile: (f: File | null) => void; hint?: ReactNode; inputKey?: number; error?: string }) {
  const id = useId();
  const describedBy = [hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(' ') || undefined;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-xs font-semibold text-ink-soft">
        {label}
      </label>
      <input
        key={inputKey}
        id={id}
        type="file"
        accept={accept}
        aria-describedby={describedBy}
        aria-invalid={error ? true : undefined}
        onChange={(e) => onFile(e.target.files?.[0] ?? null)}
        className="block w-full max-w-md rounded-md border border-rule-strong bg-paper-raised text-sm file:mr-3 file:border-0 file:border-r file:border-rule-strong file:bg-paper-sunk file:px-3 file:py-1.5 file:text-sm file:font-medium file:text-ink"
      />
      {file && (
        <p className="text-xs text-ink-muted">
          {file.name}, {file.size < 1024 ? `${file.size} bytes` : `${(file.size / 1024).toFixed(1)} KiB`}
        </p>
      )}
      {hint && (
        <div id={`${id}-hint`} className="text-xs text-ink-muted">
          {hint}
        </div>
      )}
      {error && (
        <p id={`${id}-error`} className="text-xs font-medium text-danger">
          {error}
        </p>
      )}
    </div>
  );
}

/** A short format reminder with an example file, shown beside an upload control. */
export function FormatReminder({ title, children, example }: { title: string; children: ReactNode; example: string }) {
  return (
    <details open className="rounded-md border border-rule bg-paper-sunk/40 px-3 py-2 text-xs text-ink-soft">
      <summary className="cursor-pointer font-semibold text-ink">{title}</summary>
      <div className="mt-1.5 flex flex-col gap-1.5">
        {children}
        <pre className="overflow-x-auto rounded border border-rule bg-paper-raised px-2 py-1.5 font-mono text-2xs leading-snug text-ink">{example}</pre>
      </div>
    </details>
  );
}
