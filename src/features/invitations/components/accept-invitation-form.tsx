import { useState, type FormEvent } from 'react';
import { acceptInvitationSchema } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useAcceptInvitation } from '../api/accept-invitation';

export function AcceptInvitationForm({ token, email, onAccepted }: { token: string; email: string; onAccepted: () => void }) {
  const [name, setName] = useState('');
  const [password, setPassword] = useState('');
  const [repeat, setRepeat] = useState('');
  const [local, setLocal] = useState<FieldErrors>({});
  const accept = useAcceptInvitation(token);

  function submit(e: FormEvent) {
    e.preventDefault();
    const checked = checkWith(acceptInvitationSchema, { name, password });
    const errors: FieldErrors = checked.ok ? {} : { ...checked.errors };
    if (password !== repeat && !errors.password) errors.repeat = 'does not match the password';
    setLocal(errors);
    if (!checked.ok || errors.repeat) return;
    accept.mutate(checked.data, { onSuccess: onAccepted });
  }

  return (
    <form onSubmit={submit} aria-label="Create your account" className="flex flex-col gap-3" noValidate>
      {accept.error && <FormError error={accept.error} />}
      {/* the address is fixed by the invitation; shown for password managers */}
      <input type="email" name="email" autoComplete="username" value={email} readOnly hidden />
      <TextField label="Your name" name="name" autoComplete="name" required value={name} onChange={(e) => setName(e.target.value)} error={fieldError(local, accept.error, 'name')} />
      <TextField
        label="Password"
        name="password"
        type="password"
        autoComplete="new-password"
        required
        value={password}
        onChange={(e) => setPassword(e.target.value)}
        error={fieldError(local, accept.error, 'password')}
        hint="At least 10 characters."
      />
      <TextField label="Repeat the password" name="repeat" type="password" autoComplete="new-password" required value={repeat} onChange={(e) => setRepeat(e.target.value)} error={local.repeat} />
      <Button type="submit" variant="primary" busy={accept.isPending}>
        Create account and join
      </Button>
    </form>
  );
}
