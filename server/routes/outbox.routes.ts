import { desc, eq } from 'drizzle-orm';
import type { OutboxMessage } from '@shared/schemas/register';
import type { AppContext } from '../context';
import type { authorizer } from '../auth/authorize';
import { analyses, outbox } from '../db/schema';
import { route, type ApiRoute } from './route';

export const outboxRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/outbox', auth.admin, async (_req, res) => {
    const rows = await ctx.db
      .select({ message: outbox, analysis: analyses.name })
      .from(outbox)
      .leftJoin(analyses, eq(analyses.id, outbox.analysisId))
      .orderBy(desc(outbox.id))
      .limit(500);
    const messages: OutboxMessage[] = rows.map(({ message: m, analysis }) => ({
      id: m.id,
      to: m.to,
      subject: m.subject,
      body: m.body,
      delivered: m.delivered,
      error: m.error,
      createdAt: m.createdAt.toISOString(),
      analysis,
    }));
    res.json(messages);
  }),
];
