import type { ErrorRequestHandler } from 'express';
import { ZodError } from 'zod';

/** The one error type: an HTTP status and a message a person can act on. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly code?: string,
    readonly issues?: { path: (string | number)[]; message: string }[],
  ) {
    super(message);
  }
}

export const badRequest = (message: string, issues?: AppError['issues']) => new AppError(400, message, 'bad_request', issues);
export const unauthorised = () => new AppError(401, 'Sign in to continue.', 'signed_out');
export const forbidden = (message = 'Your role in this analysis does not allow this.') => new AppError(403, message, 'forbidden');
export const notFound = (what: string) => new AppError(404, `${what} was not found.`, 'not_found');
export const conflict = (message: string) => new AppError(409, message, 'conflict');
export const unprocessable = (message: string, issues?: AppError['issues']) => new AppError(422, message, 'invalid', issues);

export function zodIssues(error: ZodError) {
  return error.issues.map((i) => ({ path: i.path.map((p) => (typeof p === 'symbol' ? String(p) : p)), message: i.message }));
}

function describeIssues(issues: { path: (string | number)[]; message: string }[]) {
  const first = issues.slice(0, 3).map((i) => (i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message));
  return first.join('; ') + (issues.length > 3 ? ` (and ${issues.length - 3} more)` : '');
}

type HttpishError = { status?: number; statusCode?: number; type?: string; code?: string; expose?: boolean; message?: string };

/** The one error middleware: zod → 400/422 with the failing paths, auth → 401/403, the rest → 500 with a log line. */
export function errorHandler(log: (line: string) => void = console.error): ErrorRequestHandler {
  return (err, _req, res, _next) => {
    if (err instanceof ZodError) {
      const issues = zodIssues(err);
      res.status(400).json({ error: { message: `The request is not valid: ${describeIssues(issues)}.`, code: 'bad_request', issues } });
      return;
    }
    if (err instanceof AppError) {
      const message = err.issues?.length && !err.message.includes(':') ? `${err.message}: ${describeIssues(err.issues)}.` : err.message;
      res.status(err.status).json({ error: { message, code: err.code, issues: err.issues } });
      return;
    }
    const e = err as HttpishError;
    const status = e.status ?? e.statusCode;
    if (e.type === 'entity.too.large') {
      res.status(413).json({ error: { message: 'The request body is too large. Send less data at once.', code: 'too_large' } });
      return;
    }
    if (e.type === 'entity.parse.failed') {
      res.status(400).json({ error: { message: 'The request body is not valid JSON. Check the syntax and send it again.', code: 'bad_json' } });
      return;
    }
    if (e.code === 'EBADCSRFTOKEN' || e.code === 'csrf') {
      res.status(403).json({ error: { message: 'The form has expired or the security token is missing. Reload the page and try again.', code: 'csrf' } });
      return;
    }
    if (status && status >= 400 && status < 500) {
      res.status(status).json({ error: { message: e.expose && e.message ? e.message : 'The request could not be handled.', code: e.type ?? 'bad_request' } });
      return;
    }
    log(`[error] ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
    res.status(500).json({ error: { message: 'Something went wrong on the server. The error has been logged; try again, and tell an admin if it persists.', code: 'internal' } });
  };
}
