import type { ReactNode } from 'react';
import { Mark } from './mark';

/** A page outside the signed-in layout (sign-in, invitation): the brand, one card, an optional footnote. */
export function PublicPage({ title, wide, footnote, children }: { title: string; wide?: boolean; footnote?: ReactNode; children: ReactNode }) {
  return (
    <main id="main" className={`flex min-h-screen items-center justify-center px-4 ${wide ? 'py-10' : ''}`}>
      <div className={`w-full ${wide ? 'max-w-md' : 'max-w-sm'}`}>
        <div className="mb-6 flex items-center gap-2.5">
          <Mark className="size-8" />
          <div>
            <p className="text-lg leading-tight font-semibold tracking-tight">Plumbline</p>
            <p className="text-xs text-ink-muted">Systematics register, review and fits for analysis teams</p>
          </div>
        </div>
        <div className="rounded-lg border border-rule bg-paper-raised px-6 py-5 shadow-[0_1px_0_var(--color-rule)]">
          <h1 className={`${wide ? 'mb-3' : 'mb-4'} text-base font-semibold`}>{title}</h1>
          {children}
        </div>
        {footnote && <p className="mt-4 text-xs text-ink-muted">{footnote}</p>}
      </div>
    </main>
  );
}
