import { useState, type FormEvent } from 'react';
import { Link, Navigate, useNavigate, useSearchParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys, useMe } from '../api/queries.js';
import { signInRequestSchema, type UserResponse } from '../api/contract.js';
import { safeNext } from '../auth/nextPath.js';
import { Button, FormError, FormSheet, TextField, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';

export function SignIn() {
  const [params] = useSearchParams();
  const next = safeNext(params.get('next'));
  const navigate = useNavigate();
  const qc = useQueryClient();
  const [errors, setErrors] = useState<FieldErrors>({});
  const signIn = useMutation({
    meta: { quiet401: true },
    mutationFn: (body: unknown) => api<UserResponse>('POST', '/api/auth/sign-in', body),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: keys.me });
      navigate(next, { replace: true });
    },
    onError: (e) => setErrors(serverFieldErrors(e)),
  });

  // Already signed in (e.g. a second tab): go straight on.
  const me = useMe();
  if (me.data && !signIn.isPending) return <Navigate to={next} replace />;

  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const r = validate(signInRequestSchema, { email: form.get('email'), password: form.get('password') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    signIn.mutate(r.data);
  }

  return (
    <FormSheet
      title="Sign in"
      lede={params.get('next') ? 'Sign in to continue to the page you asked for.' : 'Welcome back to the press room.'}
      footer={
        <>
          New here? <Link to="/sign-up">Create an account</Link>
        </>
      }
    >
      <form noValidate onSubmit={submit} className="space-y-5">
        <TextField label="E-mail" name="email" type="email" autoComplete="email" error={errors.email} autoFocus />
        <TextField label="Password" name="password" type="password" autoComplete="current-password" error={errors.password} />
        {signIn.isError && !Object.keys(errors).length ? <FormError error={signIn.error} /> : null}
        <div className="flex items-center justify-between">
          <Link to="/forgot-password" className="text-sm">
            Forgot your password?
          </Link>
          <Button type="submit" busy={signIn.isPending} busyLabel="Signing in…">
            Sign in
          </Button>
        </div>
      </form>
    </FormSheet>
  );
}
