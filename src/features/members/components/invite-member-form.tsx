import { useState, type FormEvent } from 'react';
import { MEMBER_ROLES, ROLE_LABELS, type MemberRole } from '@shared/permissions';
import { invitationInputSchema } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { SelectField, TextField } from '../../../components/ui/field';
import { FormError } from '../../../components/ui/error-notice';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useInviteMember } from '../api/invite-member';

/**
 * Invite by e-mail: an address that already has an account becomes a member at once; any other
 * address receives an e-mail with a link to create its account.
 */
export function InviteMemberForm({ slug }: { slug: string }) {
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<MemberRole>('contact');
  const [local, setLocal] = useState<FieldErrors>({});
  const [done, setDone] = useState<string | null>(null);
  const invite = useInviteMember(slug);

  function submit(e: FormEvent) {
    e.preventDefault();
    setDone(null);
    const checked = checkWith(invitationInputSchema, { email: email.trim(), role });
    if (!checked.ok) return setLocal(checked.errors);
    setLocal({});
    invite.mutate(checked.data, {
      onSuccess: (r) => {
        setDone(
          r.outcome === 'added'
            ? `${r.email} already had an account and was added as ${ROLE_LABELS[role].toLowerCase()}.`
            : `Invitation sent to ${r.email}. They join as ${ROLE_LABELS[role].toLowerCase()} when they open the link and create their account.`,
        );
        setEmail('');
      },
    });
  }

  return (
    <form onSubmit={submit} aria-label="Invite by e-mail" className="flex flex-col gap-3" noValidate>
      {invite.error && <FormError error={invite.error} />}
      {done && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {done}
        </p>
      )}
      <div className="flex flex-wrap items-start gap-3">
        <TextField
          label="E-mail"
          type="email"
          name="email"
          required
          autoComplete="off"
          value={email}
          onChange={(e) => setEmail(e.target.value)}
          error={fieldError(local, invite.error, 'email')}
          hint="Someone with an account is added at once; anyone else gets an e-mail with a link."
          className="min-w-64 flex-1"
        />
        <SelectField label="Role" name="role" value={role} onChange={(e) => setRole(e.target.value as MemberRole)} error={fieldError(local, invite.error, 'role')} className="w-52">
          {MEMBER_ROLES.map((r) => (
            <option key={r} value={r}>
              {ROLE_LABELS[r]}
            </option>
          ))}
        </SelectField>
        <div className="pt-5">
          <Button type="submit" variant="primary" busy={invite.isPending}>
            Invite
          </Button>
        </div>
      </div>
    </form>
  );
}
