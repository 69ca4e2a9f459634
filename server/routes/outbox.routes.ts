import type { AppContext } from '../context';
import type { authorizer } from '../auth/authorize';
import { listOutbox } from '../services/outbox.service';
import { route, type ApiRoute } from './route';

export const outboxRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/outbox', auth.admin, async (_req, res) => {
    res.json(await listOutbox(ctx));
  }),
];
