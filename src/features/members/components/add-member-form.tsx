import { useState, type FormEvent } from 'react';
import { MEMBER_ROLES, ROLE_LABELS, type MemberRole } from '@shared/permissions';
import { Button } from '../../../components/ui/button';
import { SelectField, TextField } from '../../../components/ui/field';
import { FormError } from '../../../components/ui/error-notice';
import { isApiRequestError } from '../../../lib/api-client';
import { useAddMember } from '../api/add-member';

export function AddMemberForm({ slug }: { slug: string }) {
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<MemberRole>('contact');
  const [added, setAdded] = useState<string | null>(null);
  const add = useAddMember(slug);
  const err = isApiRequestError(add.error) ? add.error : null;

  function submit(e: FormEvent) {
    e.preventDefault();
    setAdded(null);
    add.mutate(
      { email: email.trim(), role },
      {
        onSuccess: (m) => {
          setAdded(`${m.name} was added as ${ROLE_LABELS[m.role].toLowerCase()}.`);
          setEmail('');
        },
      },
    );
  }

  return (
    <form onSubmit={submit} aria-label="Add a member" className="flex flex-col gap-3" noValidate>
      {add.error && <FormError error={add.error} />}
      {added && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {added}
        </p>
      )}
      <div className="flex flex-wrap items-start gap-3">
        <TextField
          label="E-mail of an existing account"
          type="email"
          name="email"
          required
          value={email}
          onChange={(e) => setEmail(e.target.value)}
          error={err?.fieldMessage('email')}
          className="min-w-64 flex-1"
        />
        <SelectField label="Role" name="role" value={role} onChange={(e) => setRole(e.target.value as MemberRole)} error={err?.fieldMessage('role')} className="w-52">
          {MEMBER_ROLES.map((r) => (
            <option key={r} value={r}>
              {ROLE_LABELS[r]}
            </option>
          ))}
        </SelectField>
        <div className="pt-5">
          <Button type="submit" variant="primary" busy={add.isPending}>
            Add member
          </Button>
        </div>
      </div>
    </form>
  );
}
