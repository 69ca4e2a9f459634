import { Navigate, useNavigate, useSearchParams } from 'react-router';
import { useMe } from '../../features/auth/api/get-me';
import { SignInForm } from '../../features/auth/components/sign-in-form';
import { Mark } from '../../components/layout/mark';

/** Only same-site paths are followed after sign-in. */
export function safeNext(next: string | null): string {
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/sign-in') ? next : '/';
}

export function SignInRoute() {
  const [params] = useSearchParams();
  const next = safeNext(params.get('next'));
  const navigate = useNavigate();
  const me = useMe();

  if (me.data) return <Navigate to={next} replace />;

  return (
    <main id="main" className="flex min-h-screen items-center justify-center px-4">
      <div className="w-full max-w-sm">
        <div className="mb-6 flex items-center gap-2.5">
          <Mark className="size-8" />
          <div>
            <p className="text-lg leading-tight font-semibold tracking-tight">Plumbline</p>
            <p className="text-xs text-ink-muted">Systematics register, review and fits for analysis teams</p>
          </div>
        </div>
        <div className="rounded-lg border border-rule bg-paper-raised px-6 py-5 shadow-[0_1px_0_var(--color-rule)]">
          <h1 className="mb-4 text-base font-semibold">Sign in</h1>
          {params.get('next') && (
            <p className="mb-3 text-sm text-ink-muted">Sign in to continue where you were.</p>
          )}
          <SignInForm onSignedIn={() => navigate(next, { replace: true })} />
        </div>
        <p className="mt-4 text-xs text-ink-muted">Accounts are created by an admin. Ask yours if you do not have one.</p>
      </div>
    </main>
  );
}
