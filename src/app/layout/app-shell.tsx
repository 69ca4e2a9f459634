import { Link, NavLink, Navigate, Outlet, useLocation, useNavigate } from 'react-router';
import type { Me } from '@shared/schemas/api';
import { Mark } from '../../components/layout/mark';
import { ErrorNotice } from '../../components/ui/error-notice';
import { Loading } from '../../components/ui/loading';
import { useMe } from '../../features/auth/api/get-me';
import { useSignOut } from '../../features/auth/api/sign-out';
import { ApiRequestError } from '../../lib/api-client';

const topLink = ({ isActive }: { isActive: boolean }) =>
  `rounded-md px-2.5 py-1 text-sm font-medium ${isActive ? 'bg-paper-sunk text-ink' : 'text-ink-soft hover:bg-paper-sunk hover:text-ink'}`;

function TopBar({ me }: { me: Me }) {
  const signOut = useSignOut();
  const navigate = useNavigate();
  return (
    <header className="sticky top-0 z-20 border-b border-rule bg-paper/95 backdrop-blur">
      <div className="flex h-12 items-center gap-4 px-4">
        <Link to="/" className="flex items-center gap-2 rounded font-semibold tracking-tight text-ink">
          <Mark />
          Plumbline
        </Link>
        <nav aria-label="Main" className="flex items-center gap-1">
          <NavLink to="/" end className={topLink}>
            Analyses
          </NavLink>
          {me.user.isAdmin && (
            <>
              <NavLink to="/admin/accounts" className={topLink}>
                Accounts
              </NavLink>
              <NavLink to="/admin/outbox" className={topLink}>
                Outbox
              </NavLink>
            </>
          )}
        </nav>
        <div className="ml-auto flex items-center gap-3">
          <div className="text-right leading-tight">
            <p className="text-sm font-medium text-ink">
              {me.user.name}
              {me.user.isAdmin && <span className="ml-1.5 rounded bg-ink px-1 py-px text-2xs font-semibold text-paper" title="Manages accounts, analyses and memberships">ADMIN</span>}
            </p>
            <p className="text-xs text-ink-muted">{me.user.email}</p>
          </div>
          <button
            type="button"
            className="rounded-md border border-rule-strong bg-paper-raised px-2.5 py-1 text-sm font-medium text-ink hover:bg-paper-sunk disabled:opacity-60"
            disabled={signOut.isPending}
            onClick={() => signOut.mutate(undefined, { onSettled: () => navigate('/sign-in', { replace: true }) })}
          >
            Sign out
          </button>
        </div>
      </div>
    </header>
  );
}

/** Every screen but sign-in: requires a session, and frames the page with the top bar. */
export function AppShell() {
  const me = useMe();
  const location = useLocation();

  if (me.isPending) return <div className="px-6"><Loading label="Checking your session…" /></div>;
  if (me.isError)
    return (
      <main className="mx-auto max-w-xl px-6 py-16">
        <ErrorNotice error={me.error} onRetry={() => void me.refetch()} />
      </main>
    );
  if (!me.data) {
    const next = location.pathname + location.search;
    return <Navigate to={next === '/' ? '/sign-in' : `/sign-in?next=${encodeURIComponent(next)}`} replace />;
  }
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-30 focus:rounded focus:bg-paper-raised focus:px-3 focus:py-1.5">
        Skip to content
      </a>
      <TopBar me={me.data} />
      <Outlet />
    </div>
  );
}

/** Admin screens: hidden from everyone else (the server refuses them anyway). */
export function RequireAdmin() {
  const me = useMe();
  if (!me.data?.user.isAdmin)
    return (
      <main id="main" className="mx-auto max-w-2xl px-6 py-12">
        <ErrorNotice error={new ApiRequestError(403, 'Accounts and the outbox are managed by admins, and your account is not an admin.')} />
      </main>
    );
  return <Outlet />;
}
