import type { RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { PassportStatic } from 'passport';
import { signInSchema } from '@shared/schemas/api';
import type { AppContext } from '../context';
import { me } from '../services/users.service';
import { AppError, unauthorised } from '../errors';
import { csrf } from '../auth/csrf';
import { route, type ApiRoute } from './route';

export function authRoutes(ctx: AppContext, passport: PassportStatic): ApiRoute[] {
  // failures are counted per address, so that a person who signs in often is never refused; a
  // separate, higher cap on every attempt keeps one address from sending sign-ins without end
  const limited = (message: string): RequestHandler => (_req, _res, next) => next(new AppError(429, message, 'rate_limited'));
  const window = { windowMs: 15 * 60 * 1000, standardHeaders: 'draft-8' as const, legacyHeaders: false };
  const failedSignIns = rateLimit({
    ...window,
    limit: ctx.config.SIGN_IN_LIMIT,
    skipSuccessfulRequests: true,
    handler: limited(`Too many failed sign-ins from this address (${ctx.config.SIGN_IN_LIMIT} in 15 minutes). Wait 15 minutes and try again.`),
  });
  const allSignIns = rateLimit({
    ...window,
    limit: ctx.config.SIGN_IN_ATTEMPT_LIMIT,
    identifier: 'all-sign-ins',
    handler: limited(`Too many sign-in attempts from this address (${ctx.config.SIGN_IN_ATTEMPT_LIMIT} in 15 minutes). Wait 15 minutes and try again.`),
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
    route('post', '/api/auth/sign-in', allSignIns, failedSignIns, signIn),
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
