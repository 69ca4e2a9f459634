import { EmptyState } from '../../../components/ui/empty-state';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatDateTime } from '../../../lib/format';
import type { OutboxMessage } from '../api/get-outbox';

export function OutboxList({ messages }: { messages: OutboxMessage[] }) {
  if (messages.length === 0)
    return (
      <EmptyState title="The outbox is empty" notBuilt>
        <p>
          Every e-mail Plumbline sends (invitations to an analysis, new questions for an entry's owner, review decisions) will be listed here with its
          recipient, subject and delivery state. Sending e-mail is not built yet, so nothing has been queued.
        </p>
      </EmptyState>
    );
  return (
    <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
      <table className={tableClass} aria-label="Outbox">
        <thead>
          <tr>
            <th scope="col" className={thClass}>To</th>
            <th scope="col" className={thClass}>Subject</th>
            <th scope="col" className={thClass}>Queued</th>
            <th scope="col" className={thClass}>Sent</th>
          </tr>
        </thead>
        <tbody>
          {messages.map((m, i) => (
            <tr key={m.id ?? i}>
              <td className={tdClass}>{m.to ?? '–'}</td>
              <td className={tdClass}>{m.subject ?? '–'}</td>
              <td className={tdClass}>{m.createdAt ? formatDateTime(m.createdAt) : '–'}</td>
              <td className={tdClass}>{m.sentAt ? formatDateTime(m.sentAt) : <span className="text-ink-muted">not yet</span>}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
