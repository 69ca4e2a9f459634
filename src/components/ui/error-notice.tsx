import { Link, useLocation } from 'react-router';
import { isApiRequestError } from '../../lib/api-client';
import { Button } from './button';

type Described = { title: string; detail: string; retryable: boolean; signIn?: boolean };

/** Turn any failure into words a person can act on. */
export function describeError(error: unknown): Described {
  if (isApiRequestError(error)) {
    if (error.isNetwork) return { title: 'The server cannot be reached', detail: error.message, retryable: true };
    if (error.status === 401) return { title: 'You are signed out', detail: 'Sign in again to continue.', retryable: false, signIn: true };
    if (error.status === 403 && error.code !== 'csrf')
      return { title: 'Your role does not allow this', detail: error.message, retryable: false };
    if (error.status === 404) return { title: 'Not found', detail: error.message, retryable: false };
    if (error.status >= 500) return { title: 'The server ran into a problem', detail: error.message, retryable: true };
    return { title: 'The request was refused', detail: error.message, retryable: false };
  }
  const message = error instanceof Error ? error.message : String(error);
  return { title: 'Something went wrong', detail: message, retryable: true };
}

export function ErrorNotice({ error, onRetry, compact = false }: { error: unknown; onRetry?: () => void; compact?: boolean }) {
  const d = describeError(error);
  const location = useLocation();
  const next = encodeURIComponent(location.pathname + location.search);
  return (
    <div role="alert" className={`rounded-lg border border-danger/30 bg-danger-soft/60 ${compact ? 'px-3 py-2' : 'px-5 py-4'}`}>
      <p className="font-semibold text-danger">{d.title}</p>
      {d.detail && d.detail !== d.title && <p className="mt-0.5 text-sm text-ink-soft">{d.detail}</p>}
      {(d.retryable && onRetry) || d.signIn ? (
        <div className="mt-2 flex gap-2">
          {d.retryable && onRetry && (
            <Button size="sm" onClick={onRetry}>
              Try again
            </Button>
          )}
          {d.signIn && (
            <Link className="text-sm font-medium text-teal-ink underline" to={`/sign-in?next=${next}`}>
              Sign in
            </Link>
          )}
        </div>
      ) : null}
    </div>
  );
}

/**
 * A one-line error above a form; field-level issues are shown next to their fields.
 * A refusal (4xx) is told in the server's own words; a role refusal, a lost connection
 * or a server fault gets its heading too.
 */
export function FormError({ error }: { error: unknown }) {
  if (!error) return null;
  const d = describeError(error);
  const api = isApiRequestError(error) ? error : null;
  const ownWords = api && api.status >= 400 && api.status < 500 && !api.isForbidden;
  const text = ownWords ? api.message : d.detail && d.detail !== d.title ? `${d.title}. ${d.detail}` : d.title;
  return (
    <p role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm text-danger">
      {text}
      {api && api.issues.length > 0 && ' See the fields below.'}
    </p>
  );
}

/**
 * The refusal of an uploaded file, in the server's words (they name the row and column), with
 * each further issue listed beneath it.
 */
export function UploadError({ error }: { error: unknown }) {
  if (!error) return null;
  const api = isApiRequestError(error) ? error : null;
  if (!api || api.status < 400 || api.status >= 500 || api.isForbidden) return <FormError error={error} />;
  // The message usually names every problem already; list only the issues it leaves out.
  const extra = api.issues.filter((i) => !api.message.includes(i.message));
  return (
    <div role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm text-danger">
      <p className="font-semibold">The file was refused; nothing was saved.</p>
      <p className="mt-0.5 whitespace-pre-wrap">{api.message}</p>
      {extra.length > 0 && (
        <ul className="mt-1 list-disc pl-5 text-xs">
          {extra.slice(0, 20).map((i, n) => (
            <li key={n}>
              {i.path.length > 0 && <span className="font-mono">{i.path.join('.')}: </span>}
              {i.message}
            </li>
          ))}
          {extra.length > 20 && <li>… and {extra.length - 20} more</li>}
        </ul>
      )}
    </div>
  );
}
