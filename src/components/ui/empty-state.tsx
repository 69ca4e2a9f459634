import type { ReactNode } from 'react';

/**
 * What a screen shows when there is nothing to show yet. `notBuilt` marks screens whose
 * backing has not been built: they say what will appear, and never show made-up data.
 */
export function EmptyState({ title, children, notBuilt = false, action }: { title: string; children?: ReactNode; notBuilt?: boolean; action?: ReactNode }) {
  return (
    <section aria-label={title} className="rounded-lg border border-dashed border-rule-strong bg-paper-raised/60 px-6 py-8 text-center">
      {notBuilt && (
        <p className="mb-2 text-2xs font-semibold tracking-wider text-amber-ink uppercase">Not built yet</p>
      )}
      <h2 className="text-base font-semibold text-ink">{title}</h2>
      {children && <div className="mx-auto mt-2 max-w-prose space-y-2 text-sm text-ink-muted">{children}</div>}
      {action && <div className="mt-4">{action}</div>}
    </section>
  );
}
