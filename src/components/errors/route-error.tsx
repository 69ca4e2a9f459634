import { isRouteErrorResponse, Link, useRouteError } from 'react-router';
import { ErrorNotice } from '../ui/error-notice';

/** Shown in place of a route that failed to render; the rest of the page keeps working. */
export function RouteError() {
  const error = useRouteError();
  if (isRouteErrorResponse(error) && error.status === 404) return <NotFound />;
  return (
    <div className="mx-auto max-w-2xl py-8">
      <ErrorNotice error={error} onRetry={() => window.location.reload()} />
      <p className="mt-3 text-sm text-ink-muted">
        <Link to="/" className="text-teal-ink underline">
          Back to the analyses
        </Link>
      </p>
    </div>
  );
}

/** The outermost boundary: the app shell itself failed, so only plain markup is safe here. */
export function RootError() {
  const error = useRouteError();
  const message = error instanceof Error ? error.message : isRouteErrorResponse(error) ? `${error.status} ${error.statusText}` : String(error);
  return (
    <main className="mx-auto max-w-xl px-6 py-16">
      <h1 className="text-xl font-semibold">Plumbline could not show this page</h1>
      <p className="mt-2 text-ink-soft">{message}</p>
      <p className="mt-4 flex gap-4 text-sm">
        <button type="button" className="font-medium text-teal-ink underline" onClick={() => window.location.reload()}>
          Reload
        </button>
        <a href="/" className="font-medium text-teal-ink underline">
          Go to the analyses
        </a>
      </p>
    </main>
  );
}

export function NotFound() {
  return (
    <div className="mx-auto max-w-2xl py-12">
      <h1 className="text-xl font-semibold">There is nothing at this address</h1>
      <p className="mt-2 text-ink-soft">The link may be mistyped, or the page may have moved.</p>
      <p className="mt-4 text-sm">
        <Link to="/" className="font-medium text-teal-ink underline">
          Go to the analyses
        </Link>
      </p>
    </div>
  );
}
