import type { AppContext } from '../context';
import type { authorizer } from '../auth/authorize';
import { createAccount, listAccounts } from '../services/users.service';
import { route, type ApiRoute } from './route';

export const usersRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/users', auth.admin, async (_req, res) => {
    res.json(await listAccounts(ctx));
  }),
  route('post', '/api/users', auth.admin, async (req, res) => {
    res.status(201).json(await createAccount(ctx, req.body));
  }),
];
