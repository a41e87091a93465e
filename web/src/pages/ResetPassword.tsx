import { useState, type FormEvent } from 'react';
import { Link, useSearchParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys } from '../api/queries.js';
import { PASSWORD_MIN_LENGTH, passwordResetCompleteRequestSchema } from '../api/contract.js';
import { Button, ErrorPanel, FormError, FormSheet, Notice, TextField, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';

export function ResetPassword() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';
  const qc = useQueryClient();
  const [errors, setErrors] = useState<FieldErrors>({});
  const complete = useMutation({
    meta: { quiet401: true },
    mutationFn: (body: unknown) => api<unknown>('POST', '/api/auth/password-reset/complete', body),
    // Every session of the account ends, this browser's included.
    onSuccess: () => qc.setQueryData(keys.me, null),
    onError: (e) => setErrors(serverFieldErrors(e)),
  });
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    if (form.get('password') !== form.get('repeat')) return setErrors({ repeat: 'the two passwords differ' });
    const r = validate(passwordResetCompleteRequestSchema, { token, password: form.get('password') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    complete.mutate(r.data);
  }
  return (
    <FormSheet title="Choose a new password">
      {complete.isSuccess ? (
        <div className="space-y-4">
          <Notice tone="success" title="Password changed">
            You were signed out everywhere. Sign in with the new password.
          </Notice>
          <Link to="/sign-in" className="text-sm">
            Sign in
          </Link>
        </div>
      ) : !token ? (
        <ErrorPanel title="This link is incomplete" error={new Error('the reset link has no token; open the link from the mail again')} />
      ) : (
        <form noValidate onSubmit={submit} className="space-y-5">
          <TextField
            label="New password"
            name="password"
            type="password"
            autoComplete="new-password"
            error={errors.password}
            hint={`At least ${PASSWORD_MIN_LENGTH} characters.`}
            autoFocus
          />
          <TextField label="Repeat it" name="repeat" type="password" autoComplete="new-password" error={errors.repeat} />
          {errors.token ? <FormError error={new Error(`link: ${errors.token}`)} /> : null}
          {complete.isError && !Object.keys(errors).length ? <FormError error={complete.error} /> : null}
          <div className="flex justify-end">
            <Button type="submit" busy={complete.isPending} busyLabel="Saving…">
              Save password
            </Button>
          </div>
        </form>
      )}
    </FormSheet>
  );
}
