import type { ReactNode } from 'react';

/** A term and its number in a definition list (a grid of two columns), the number explained on hover. */
export function DefinitionRow({ label, title, children }: { label: ReactNode; title: string; children: ReactNode }) {
  return (
    <>
      <dt className="text-ink-muted">{label}</dt>
      <dd className="tabular-nums" title={title}>
        {children}
      </dd>
    </>
  );
}
