import { Link, useNavigate, useParams } from 'react-router';
import { ROLE_LABELS } from '@shared/permissions';
import { PublicPage } from '../../components/layout/public-page';
import { ErrorNotice } from '../../components/ui/error-notice';
import { Loading } from '../../components/ui/loading';
import { useMe } from '../../features/auth/api/get-me';
import { useInvitation } from '../../features/invitations/api/get-invitation';
import { AcceptInvitationForm } from '../../features/invitations/components/accept-invitation-form';

/** The page an invitation e-mail links to: public, outside the signed-in layout. */
export function InvitationRoute() {
  const { token = '' } = useParams();
  const invitation = useInvitation(token);
  const me = useMe();
  const navigate = useNavigate();

  return (
    <PublicPage title="Invitation" wide>
      {invitation.isPending ? (
        <Loading label="Reading the invitation…" />
      ) : invitation.isError ? (
        <div className="flex flex-col gap-3">
          <ErrorNotice error={invitation.error} />
          <Link to={me.data ? '/' : '/sign-in'} className="text-sm font-medium text-teal-ink hover:underline">
            {me.data ? 'Go to your analyses' : 'Sign in to Plumbline'}
          </Link>
        </div>
      ) : (
        <>
          <dl className="mb-4 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
            <dt className="text-ink-muted">Analysis</dt>
            <dd className="font-semibold">{invitation.data.analysis}</dd>
            <dt className="text-ink-muted">Role</dt>
            <dd>{ROLE_LABELS[invitation.data.role]}</dd>
            <dt className="text-ink-muted">E-mail</dt>
            <dd>{invitation.data.email}</dd>
            <dt className="text-ink-muted">Invited by</dt>
            <dd>{invitation.data.invitedBy}</dd>
          </dl>
          {me.data && (
            <p className="mb-3 rounded-md border border-amber/40 bg-amber-soft/60 px-3 py-2 text-sm text-amber-ink">
              You are signed in as {me.data.user.email}. Creating this account signs you in as {invitation.data.email} instead.
            </p>
          )}
          <p className="mb-3 text-sm text-ink-soft">Choose your name and a password to create your account; you join the analysis at once.</p>
          <AcceptInvitationForm token={token} email={invitation.data.email} onAccepted={() => navigate(`/a/${invitation.data.analysisSlug}`, { replace: true })} />
        </>
      )}
    </PublicPage>
  );
}
