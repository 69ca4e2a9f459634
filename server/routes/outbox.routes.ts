import { desc } from 'drizzle-orm';
import type { AppContext } from '../context';
import type { authorizer } from '../auth/authorize';
import { outbox } from '../db/schema';
import { route, type ApiRoute } from './route';

export const outboxRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/outbox', auth.admin, async (_req, res) => {
    res.json(await ctx.db.select().from(outbox).orderBy(desc(outbox.id)).limit(500));
  }),
];
