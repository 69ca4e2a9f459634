import type { OutboxMessage } from '@shared/schemas/register';
import type { AppContext } from '../context';
import { latestMessages } from '../db/outbox.repository';

/** The outbox an admin reads: the 500 newest messages. */
export async function listOutbox(ctx: AppContext): Promise<OutboxMessage[]> {
  const rows = await latestMessages(ctx.db, 500);
  return rows.map(({ message: m, analysis }) => ({
    id: m.id,
    to: m.to,
    subject: m.subject,
    body: m.body,
    delivered: m.delivered,
    error: m.error,
    createdAt: m.createdAt.toISOString(),
    analysis,
  }));
}
