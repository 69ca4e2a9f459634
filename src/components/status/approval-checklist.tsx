import type { ApprovalChecklist } from '@shared/schemas/approval';

/**
 * A checklist the server computed (for a version frozen for approval, or for unblinding): each
 * item with whether it holds and, where it does not, the items that keep it open. Marks are
 * words as well as colours.
 */
export function ChecklistView({ checklist, label }: { checklist: ApprovalChecklist; label: string }) {
  const holding = checklist.items.filter((i) => i.ok).length;
  return (
    <section aria-label={label} className="rounded-md border border-rule bg-paper-raised px-3 py-2 text-sm">
      <p className="mb-1 font-semibold text-ink">
        {label}: {holding} of {checklist.items.length} hold
        {checklist.version !== null && <span className="ml-1 font-normal text-ink-muted">(model version {checklist.version})</span>}
      </p>
      <ul className="flex flex-col gap-1">
        {checklist.items.map((i) => (
          <li key={i.key} className="flex gap-2">
            <span aria-hidden className={`mt-0.5 inline-block size-3.5 shrink-0 rounded-full border ${i.ok ? 'border-teal bg-teal' : 'border-amber bg-amber-soft'}`} />
            <div className="min-w-0">
              <p className={i.ok ? 'text-ink-soft' : 'text-ink'}>
                <span className="sr-only">{i.ok ? 'Holds: ' : 'Open: '}</span>
                {i.label}. <span className="text-ink-muted">{i.detail}</span>
              </p>
              {i.open.length > 0 && (
                <ul className="ml-3 list-disc text-xs text-ink-soft">
                  {i.open.slice(0, 8).map((o) => (
                    <li key={o}>{o}</li>
                  ))}
                  {i.open.length > 8 && <li>and {i.open.length - 8} more</li>}
                </ul>
              )}
            </div>
          </li>
        ))}
      </ul>
    </section>
  );
}
