import { useState, type FormEvent } from 'react';
import { Button } from '../../../components/ui/button';
import { CheckboxField, TextField } from '../../../components/ui/field';
import { FormError } from '../../../components/ui/error-notice';
import { isApiRequestError } from '../../../lib/api-client';
import { useCreateUser } from '../api/create-user';

export function CreateUserForm() {
  const [email, setEmail] = useState('');
  const [name, setName] = useState('');
  const [password, setPassword] = useState('');
  const [isAdmin, setIsAdmin] = useState(false);
  const [created, setCreated] = useState<string | null>(null);
  const create = useCreateUser();
  const err = isApiRequestError(create.error) ? create.error : null;

  function submit(e: FormEvent) {
    e.preventDefault();
    setCreated(null);
    create.mutate(
      { email: email.trim(), name, password, isAdmin },
      {
        onSuccess: (u) => {
          setCreated(`Account created for ${u.name} (${u.email}). Tell them their password by a channel you trust.`);
          setEmail('');
          setName('');
          setPassword('');
          setIsAdmin(false);
        },
      },
    );
  }

  return (
    <form onSubmit={submit} aria-label="Create an account" className="flex flex-col gap-3" noValidate>
      {create.error && <FormError error={create.error} />}
      {created && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {created}
        </p>
      )}
      <TextField label="Name" name="name" required value={name} onChange={(e) => setName(e.target.value)} error={err?.fieldMessage('name')} />
      <TextField label="E-mail" type="email" name="email" required value={email} onChange={(e) => setEmail(e.target.value)} error={err?.fieldMessage('email')} />
      <TextField
        label="Initial password"
        type="password"
        name="new-password"
        autoComplete="new-password"
        required
        value={password}
        onChange={(e) => setPassword(e.target.value)}
        error={err?.fieldMessage('password')}
        hint="At least 10 characters."
      />
      <CheckboxField label="Admin" checked={isAdmin} onChange={(e) => setIsAdmin(e.target.checked)} hint="Admins manage accounts, analyses and memberships." />
      <div>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Create account
        </Button>
      </div>
    </form>
  );
}
