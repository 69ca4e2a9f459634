import type { Request } from 'express';
import type { AppContext } from '../context';

/** Where links in e-mails point: PUBLIC_URL, or the address the request came to. */
export const baseUrl = (ctx: AppContext, req: Request) => (ctx.config.PUBLIC_URL ?? `${req.protocol}://${req.get('host')}`).replace(/\/$/, '');

/** "?save=1" saves an upload; anything else previews it. */
export const wantsSave = (req: Request) => req.query.save === '1' || req.query.save === 'true';
