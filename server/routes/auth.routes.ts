import type { RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { PassportStatic } from 'passport';
import { signInSchema, type Me } from '@shared/schemas/api';
import type { AppContext } from '../context';
import { membershipsOf } from '../db/analyses.repository';
import { AppError, unauthorised } from '../errors';
import { csrf } from '../auth/csrf';
import { route, type ApiRoute } from './route';

export async function me(ctx: AppContext, user: Express.User): Promise<Me> {
  return { user, memberships: await membershipsOf(ctx.db, user.id) };
}

export function authRoutes(ctx: AppContext, passport: PassportStatic): ApiRoute[] {
  const signInLimit = rateLimit({
    windowMs: 15 * 60 * 1000,
    limit: ctx.config.SIGN_IN_LIMIT,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) => next(new AppError(429, 'Too many sign-in attempts from this address. Wait 15 minutes and try again.', 'rate_limited')),
  });

  const signIn: RequestHandler = (req, res, next) => {
    req.body = signInSchema.parse(req.body);
    passport.authenticate('local', (err: unknown, user: Express.User | false) => {
      if (err) return next(err);
      if (!user) return next(new AppError(401, 'That e-mail and password do not match an account. Check both and try again.', 'bad_credentials'));
      // passport regenerates the session at sign-in (no session fixation); hand out the new CSRF token
      req.logIn(user, async (loginErr) => {
        if (loginErr) return next(loginErr);
        res.set('x-csrf-token', csrf.generateToken(req, true));
        res.json(await me(ctx, user));
      });
    })(req, res, next);
  };

  return [
    route('get', '/api/auth/csrf', (req, res) => {
      res.json({ token: csrf.generateToken(req) });
    }),
    route('post', '/api/auth/sign-in', signInLimit, signIn),
    route('post', '/api/auth/sign-out', (req, res, next) => {
      req.logOut((err) => {
        if (err) return next(err);
        req.session.destroy(() => {
          res.clearCookie('plumbline.sid');
          res.status(204).end();
        });
      });
    }),
    route('get', '/api/auth/me', async (req, res) => {
      if (!req.user) throw unauthorised();
      res.json(await me(ctx, req.user));
    }),
  ];
}
