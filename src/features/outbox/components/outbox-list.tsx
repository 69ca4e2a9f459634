import { useState } from 'react';
import { Badge } from '../../../components/ui/badge';
import { EmptyState } from '../../../components/ui/empty-state';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
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

const col = dataColumns<OutboxMessage>();

function makeColumns(open: ReadonlySet<number>, toggle: (id: number) => void) {
  return col.columns([
    col.accessor('to', { header: 'To', meta: { nowrap: true } }),
    col.accessor('subject', {
      header: 'Subject',
      cell: (c) => {
        const m = c.row.original;
        const isOpen = open.has(m.id);
        return (
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
        );
      },
    }),
    col.accessor('analysis', { header: 'Analysis', meta: { nowrap: true }, cell: (c) => c.getValue() ?? <span className="text-ink-muted">none</span> }),
    col.accessor('createdAt', { header: 'Time', meta: { nowrap: true, cellClass: 'tabular-nums' }, cell: (c) => formatDateTime(c.getValue()) }),
    col.display({
      id: 'delivery',
      header: 'Delivery',
      cell: (c) => (
        <>
          <Delivery m={c.row.original} />
          {c.row.original.error && <p className="mt-1 max-w-xs text-xs text-danger">{c.row.original.error}</p>}
        </>
      ),
    }),
  ]);
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
  const columns = makeColumns(open, toggle);
  return (
    <DataTable
      columns={columns}
      data={sorted}
      getRowId={(m) => String(m.id)}
      label="Outbox"
      rowTone={(m) => (open.has(m.id) ? 'open' : undefined)}
      below={(m) =>
        open.has(m.id)
          ? { id: `outbox-body-${m.id}`, content: <pre className="max-h-96 overflow-auto font-sans text-sm whitespace-pre-wrap text-ink-soft">{m.body}</pre> }
          : null
      }
    />
  );
}
