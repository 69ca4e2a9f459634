import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { csrf } from '../auth/csrf';
import { acceptInvitation, invite, showInvitation } from '../services/invitations.service';
import { me } from '../services/users.service';
import { baseUrl } from './base-url';
import { route, type ApiRoute } from './route';

export const invitationsRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('post', '/api/analyses/:slug/invitations', auth.may('members.manage'), async (req, res) => {
    res.status(201).json(await invite(ctx, accessOf(req), req.body, baseUrl(ctx, req)));
  }),
  // public: the token in the link is the credential
  route('get', '/api/invitations/:token', async (req, res) => {
    res.json(await showInvitation(ctx, String(req.params.token)));
  }),
  route('post', '/api/invitations/:token/accept', async (req, res, next) => {
    const user = await acceptInvitation(ctx, String(req.params.token), req.body);
    req.logIn(user, async (err) => {
      if (err) return next(err);
      res.set('x-csrf-token', csrf.generateToken(req, true));
      res.status(201).json(await me(ctx, user));
    });
  }),
];
