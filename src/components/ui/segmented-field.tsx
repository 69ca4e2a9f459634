import { useId, type ReactNode } from 'react';

export type Segment<T extends string | number> = { value: T; label: string; title?: string };

/**
 * A small set of exclusive choices drawn as joined segments: real radio buttons (one tab stop, the
 * arrow keys move between them) under a legend, the chosen one filled teal.
 */
export function SegmentedField<T extends string | number>({
  legend,
  value,
  options,
  onChange,
  hint,
  className = '',
}: {
  legend: ReactNode;
  value: T;
  options: Segment<T>[];
  onChange: (value: T) => void;
  hint?: ReactNode;
  className?: string;
}) {
  const name = useId();
  return (
    <fieldset className={`flex flex-col gap-1 ${className}`} aria-describedby={hint ? `${name}-hint` : undefined}>
      <legend className="mb-1 text-xs font-semibold text-ink-soft">{legend}</legend>
      <div className="inline-flex w-fit rounded-md border border-rule-strong bg-paper-raised p-0.5">
        {options.map((o) => (
          <label key={String(o.value)} className="relative" title={o.title}>
            <input type="radio" name={name} value={String(o.value)} checked={o.value === value} onChange={() => onChange(o.value)} className="peer absolute inset-0 size-full cursor-pointer opacity-0" />
            <span className="pointer-events-none block rounded px-2.5 py-1 text-sm text-ink-soft tabular-nums peer-checked:bg-teal peer-checked:font-semibold peer-checked:text-white peer-hover:bg-paper-sunk peer-checked:peer-hover:bg-teal peer-focus-visible:outline-2 peer-focus-visible:outline-offset-1 peer-focus-visible:outline-teal">
              {o.label}
            </span>
          </label>
        ))}
      </div>
      {hint && (
        <p id={`${name}-hint`} className="text-xs text-ink-muted">
          {hint}
        </p>
      )}
    </fieldset>
  );
}
