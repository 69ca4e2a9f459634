import { useState, type FormEvent } from 'react';
import { useSignIn } from '../api/sign-in';
import { Button } from '../../../components/ui/button';
import { TextField } from '../../../components/ui/field';
import { FormError } from '../../../components/ui/error-notice';
import { isApiRequestError } from '../../../lib/api-client';

export function SignInForm({ onSignedIn }: { onSignedIn: () => void }) {
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const signIn = useSignIn();
  const err = isApiRequestError(signIn.error) ? signIn.error : null;

  function submit(e: FormEvent) {
    e.preventDefault();
    signIn.mutate({ email, password }, { onSuccess: onSignedIn });
  }

  return (
    <form onSubmit={submit} className="flex flex-col gap-3.5" noValidate>
      {signIn.error && <FormError error={signIn.error} />}
      <TextField
        label="E-mail"
        type="email"
        name="email"
        autoComplete="username"
        required
        autoFocus
        value={email}
        onChange={(e) => setEmail(e.target.value)}
        error={err?.fieldMessage('email')}
      />
      <TextField
        label="Password"
        type="password"
        name="password"
        autoComplete="current-password"
        required
        value={password}
        onChange={(e) => setPassword(e.target.value)}
        error={err?.fieldMessage('password')}
      />
      <Button type="submit" variant="primary" busy={signIn.isPending} className="mt-1">
        Sign in
      </Button>
    </form>
  );
}
