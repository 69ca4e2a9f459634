import type { RequestHandler } from 'express';
import { can, type Action, type MemberRole } from '@shared/permissions';
import { forbidden, notFound, unauthorised } from '../errors';
import type { Db } from '../db/client';
import { findAnalysisAccess, type AnalysisRow } from '../db/analyses.repository';

export type Access = { analysis: AnalysisRow; role: MemberRole | null; isAdmin: boolean; userId: number; userName: string };

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      access?: Access;
    }
  }
}

/**
 * The one server-side authorisation layer: 401 when signed out, 404 for an unknown analysis,
 * 403 when the caller is not a member or their role does not allow the action.
 */
export function authorizer(db: Db) {
  const signedIn: RequestHandler = (req, _res, next) => next(req.user ? undefined : unauthorised());

  const admin: RequestHandler = (req, _res, next) => {
    if (!req.user) return next(unauthorised());
    next(req.user.isAdmin ? undefined : forbidden('Only an admin can do this.'));
  };

  /** Loads the analysis named by :slug and checks the caller's role allows `action` there. */
  const may =
    (action: Action): RequestHandler =>
    async (req, _res, next) => {
      if (!req.user) return next(unauthorised());
      const slug = String(req.params.slug);
      const found = await findAnalysisAccess(db, slug, req.user.id);
      if (!found) return next(notFound(`Analysis "${slug}"`));
      const { analysis, role } = found;
      if (role === null && !req.user.isAdmin) return next(forbidden('You are not a member of this analysis. Ask its convener to add you.'));
      if (!can(role, req.user.isAdmin, action)) return next(forbidden());
      req.access = { analysis, role, isAdmin: req.user.isAdmin, userId: req.user.id, userName: req.user.name };
      next();
    };

  return { signedIn, admin, may };
}

export const accessOf = (req: Express.Request): Access => {
  if (!req.access) throw new Error('route is missing its authorisation step');
  return req.access;
};
