import { Navigate, useNavigate, useSearchParams } from 'react-router';
import { useMe } from '../../features/auth/api/get-me';
import { SignInForm } from '../../features/auth/components/sign-in-form';
import { PublicPage } from '../../components/layout/public-page';

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
    <PublicPage title="Sign in" footnote="Accounts are created by an admin. Ask yours if you do not have one.">
      {params.get('next') && (
        <p className="mb-3 text-sm text-ink-muted">Sign in to continue where you were.</p>
      )}
      <SignInForm onSignedIn={() => navigate(next, { replace: true })} />
    </PublicPage>
  );
}
