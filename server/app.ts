import express, { type Express } from 'express';
import helmet from 'helmet';
import type { Config } from './config';
import type { AppContext } from './context';
import type { Database } from './db/client';
import type { Mailer } from './mail/mailer';
import type { FitRunner } from './jobs/fit-runner';
import { authorizer } from './auth/authorize';
import { csrf } from './auth/csrf';
import { createPassport } from './auth/passport';
import { sessionMiddleware } from './auth/session';
import { AppError, errorHandler } from './errors';
import { analysesRoutes } from './routes/analyses.routes';
import { authRoutes } from './routes/auth.routes';
import { outboxRoutes } from './routes/outbox.routes';
import type { ApiRoute } from './routes/route';
import { usersRoutes } from './routes/users.routes';
import { registerRoutes } from './routes/register.routes';
import { modelRoutes } from './routes/model.routes';
import { invitationsRoutes } from './routes/invitations.routes';
import { fitsRoutes } from './routes/fits.routes';
import { reviewRoutes } from './routes/review.routes';

export type App = { app: Express; routes: ApiRoute[]; ctx: AppContext };

/** Builds the Express app without listening: tests drive it with supertest, server/index.ts listens. */
export function createApp(database: Database, config: Config, deps: { mailer: Mailer; fits: FitRunner; log?: (line: string) => void }): App {
  const log = deps.log ?? console.log;
  const ctx: AppContext = { db: database.db, client: database.client, config, mailer: deps.mailer, fits: deps.fits, log };
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          // Vite's dev client injects inline scripts; the production build has none
          scriptSrc: config.NODE_ENV === 'development' ? ["'self'", "'unsafe-inline'"] : ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          connectSrc: ["'self'", 'ws:'],
          upgradeInsecureRequests: config.secureCookies ? [] : null,
        },
      },
    }),
  );
  const passport = createPassport(ctx.db);
  const auth = authorizer(ctx.db);
  const routes: ApiRoute[] = [...authRoutes(ctx, passport as never), ...usersRoutes(ctx, auth), ...analysesRoutes(ctx, auth),
    ...modelRoutes(ctx, auth),
    ...registerRoutes(ctx, auth),
    ...invitationsRoutes(ctx, auth),
    ...fitsRoutes(ctx, auth),
    ...reviewRoutes(ctx, auth),
    ...outboxRoutes(ctx, auth),
  ];

  app.use(
    '/api',
    express.json({ limit: config.BODY_LIMIT_BYTES, strict: true }),
    sessionMiddleware(database.client, config),
    passport.initialize(),
    passport.session(),
    csrf.csrfSynchronisedProtection,
  );
  for (const r of routes) app[r.method](r.path, ...r.handlers);
  app.all('/api/{*splat}', (req, _res, next) => next(new AppError(404, `There is no API route ${req.method} ${req.originalUrl}.`, 'not_found')));
  app.use(errorHandler(log));
  return { app, routes, ctx };
}
