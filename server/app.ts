import { isUtf8 } from 'node:buffer';
import express, { type Express } from 'express';
import helmet from 'helmet';
import type { Config } from './config';
import type { AppContext } from './context';
import type { Database } from './db/client';
import type { Mailer } from './mail/mailer';
import type { ToyRunner } from './runs/toy-runner';
import type { FitRunner } from './runs/fit-runner';
import type { HypothesisScanRunner } from './runs/hypothesis-scan-runner';
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
import { toysRoutes } from './routes/toys.routes';
import { hypothesisScansRoutes } from './routes/hypothesis-scans.routes';
import { fitsRoutes } from './routes/fits.routes';
import { reviewRoutes } from './routes/review.routes';
import { packRoutes } from './routes/pack.routes';

/** A JSON body must be UTF-8: other bytes would be decoded into replacement characters and saved. */
function refuseNonUtf8(_req: unknown, _res: unknown, body: Buffer) {
  if (!isUtf8(body)) throw new AppError(400, 'The request body is not valid UTF-8 text. Send JSON encoded as UTF-8.', 'bad_encoding');
}

/** Names and ids in an address are text: a control character (e.g. %00) names nothing, and the database refuses it. */
const plainAddress: express.RequestHandler = (req, _res, next) => {
  let path: string;
  try {
    path = decodeURIComponent(req.path);
  } catch {
    return next(new AppError(400, 'The address has a malformed %-escape. Check the link.', 'bad_address'));
  }
  if (/[\u0000-\u001f\u007f]/.test(path)) return next(new AppError(400, 'The address contains a control character; no name or id in Plumbline does.', 'bad_address'));
  next();
};

export type App = { app: Express; routes: ApiRoute[]; ctx: AppContext };

/** Builds the Express app without listening: tests drive it with supertest, server/index.ts listens. */
export function createApp(database: Database, config: Config, deps: { mailer: Mailer; fits: FitRunner; toys: ToyRunner; scans: HypothesisScanRunner; log?: (line: string) => void }): App {
  const log = deps.log ?? console.log;
  const ctx: AppContext = { db: database.db, client: database.client, config, mailer: deps.mailer, fits: deps.fits, toys: deps.toys, scans: deps.scans, log };
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
    ...packRoutes(ctx, auth),
    ...toysRoutes(ctx, auth),
    ...hypothesisScansRoutes(ctx, auth),
    ...reviewRoutes(ctx, auth),
    ...outboxRoutes(ctx, auth),
  ];

  app.use(
    '/api',
    plainAddress,
    express.json({ limit: config.BODY_LIMIT_BYTES, strict: true, verify: refuseNonUtf8 }),
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
