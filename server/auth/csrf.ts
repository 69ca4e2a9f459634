import { csrfSync } from 'csrf-sync';

/**
 * Synchronizer-token CSRF protection: the token lives in the session and must come back in the
 * x-csrf-token header of every state-changing request. GET /api/auth/csrf hands it out.
 */
export const csrf = csrfSync({
  getTokenFromRequest: (req) => req.get('x-csrf-token') ?? undefined,
  errorConfig: { statusCode: 403, code: 'csrf', message: 'invalid csrf token' },
});
