import { Fragment, useState } from 'react';
import { Badge } from '../../../components/ui/badge';
import { EmptyState } from '../../../components/ui/empty-state';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatDateTime } from '../../../lib/format';
import type { OutboxMessage } from '../api/get-outbox';

function Delivery({ m }: { m: OutboxMessage }) {
  if (m.error)
    return (
      <Badge tone="danger" title={`Delivery failed: ${m.error}`}>
        failed
      </Badge>
    );
  return m.delivered ? (
    <Badge tone="teal" title="Handed to the mail server">
      delivered
    </Badge>
  ) : (
    <Badge tone="amber" title="Queued; not yet handed to the mail server">
      queued
    </Badge>
  );
}

/** Newest first; each message's body opens below its row. */
export function OutboxList({ messages }: { messages: OutboxMessage[] }) {
  const [open, setOpen] = useState<ReadonlySet<number>>(new Set());
  if (messages.length === 0)
    return (
      <EmptyState title="The outbox is empty">
        <p>Every e-mail Plumbline sends (invitations, entries submitted for review, entries accepted or sent back) will be listed here with its recipient, subject and delivery.</p>
      </EmptyState>
    );
  const sorted = [...messages].sort((a, b) => b.createdAt.localeCompare(a.createdAt) || b.id - a.id);
  const toggle = (id: number) =>
    setOpen((s) => {
      const next = new Set(s);
      if (next.has(id)) next.delete(id);
      else next.add(id);
      return next;
    });
  return (
    <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
      <table className={tableClass} aria-label="Outbox">
        <thead>
          <tr>
            <th scope="col" className={thClass}>To</th>
            <th scope="col" className={thClass}>Subject</th>
            <th scope="col" className={thClass}>Analysis</th>
            <th scope="col" className={thClass}>Time</th>
            <th scope="col" className={thClass}>Delivery</th>
          </tr>
        </thead>
        <tbody>
          {sorted.map((m) => {
            const isOpen = open.has(m.id);
            return (
              <Fragment key={m.id}>
                <tr className={isOpen ? 'bg-paper-sunk/40' : undefined}>
                  <td className={`${tdClass} whitespace-nowrap`}>{m.to}</td>
                  <td className={tdClass}>
                    <button
                      type="button"
                      aria-expanded={isOpen}
                      aria-controls={`outbox-body-${m.id}`}
                      onClick={() => toggle(m.id)}
                      className="inline-flex items-start gap-1.5 rounded text-left font-medium text-ink hover:text-teal-ink"
                    >
                      <span aria-hidden className="w-3 text-ink-muted">{isOpen ? '▾' : '▸'}</span>
                      {m.subject}
                    </button>
                  </td>
                  <td className={`${tdClass} whitespace-nowrap`}>{m.analysis ?? <span className="text-ink-muted">none</span>}</td>
                  <td className={`${tdClass} whitespace-nowrap tabular-nums`}>{formatDateTime(m.createdAt)}</td>
                  <td className={tdClass}>
                    <Delivery m={m} />
                    {m.error && <p className="mt-1 max-w-xs text-xs text-danger">{m.error}</p>}
                  </td>
                </tr>
                {isOpen && (
                  <tr id={`outbox-body-${m.id}`}>
                    <td colSpan={5} className={`${tdClass} bg-paper-sunk/40`}>
                      <pre className="max-h-96 overflow-auto font-sans text-sm whitespace-pre-wrap text-ink-soft">{m.body}</pre>
                    </td>
                  </tr>
                )}
              </Fragment>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
