import { useState, type FormEvent } from 'react';
import { Link, useSearchParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys } from '../api/queries.js';
import { PASSWORD_MIN_LENGTH, signUpRequestSchema, type UserResponse } from '../api/contract.js';
import { Button, FormError, FormSheet, LinkButton, NewPasswordField, Notice, TextField, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';
import { OutboxHint } from './OutboxHint.js';
import { safeNext } from '../auth/nextPath.js';

export function SignUp() {
  const qc = useQueryClient();
  const [params] = useSearchParams();
  // Arriving from an invitation: the address is known and the person goes back there afterwards.
  const next = params.get('next') ? safeNext(params.get('next')) : null;
  const [errors, setErrors] = useState<FieldErrors>({});
  const signUp = useMutation({
    mutationFn: (body: unknown) => api<UserResponse>('POST', '/api/auth/sign-up', body),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
    onError: (e) => setErrors(serverFieldErrors(e)),
  });

  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const r = validate(signUpRequestSchema, { name: form.get('name'), email: form.get('email'), password: form.get('password') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    signUp.mutate(r.data);
  }

  if (signUp.isSuccess) {
    return (
      <FormSheet title="Check your e-mail" lede={`We sent a confirmation link to ${signUp.data.user.email}.`}>
        <div className="space-y-4">
          <Notice tone="success" title="Account created">
            You are signed in. Open the link in the mail to confirm your address; starting runs and creating labs
            waits for that.
          </Notice>
          <OutboxHint />
          {next ? (
            <LinkButton to={next}>Continue where you were</LinkButton>
          ) : (
            <LinkButton to="/runs" tone="quiet">
              Go to your runs
            </LinkButton>
          )}
        </div>
      </FormSheet>
    );
  }

  return (
    <FormSheet
      title="Create an account"
      lede="Compute exact piles, order print figures and share a lab's budget."
      footer={
        <>
          Already have an account? <Link to="/sign-in">Sign in</Link>
        </>
      }
    >
      <form noValidate onSubmit={submit} className="space-y-5">
        <TextField label="Your name" name="name" autoComplete="name" error={errors.name} autoFocus />
        <TextField label="E-mail" name="email" type="email" autoComplete="email" error={errors.email} defaultValue={params.get('email') ?? undefined} />
        <NewPasswordField minLength={PASSWORD_MIN_LENGTH} error={errors.password} />
        {signUp.isError && !Object.keys(errors).length ? <FormError error={signUp.error} /> : null}
        {errors.body ? <FormError error={new Error(errors.body)} /> : null}
        <div className="flex justify-end">
          <Button type="submit" busy={signUp.isPending} busyLabel="Creating…">
            Create account
          </Button>
        </div>
      </form>
    </FormSheet>
  );
}
