import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import { useMutation } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { passwordResetRequestSchema } from '../api/contract.js';
import { Button, FormError, FormSheet, Notice, TextField, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';
import { OutboxHint } from './OutboxHint.js';

export function ForgotPassword() {
  const [errors, setErrors] = useState<FieldErrors>({});
  const reset = useMutation({
    mutationFn: (body: unknown) => api<unknown>('POST', '/api/auth/password-reset', body),
    onError: (e) => setErrors(serverFieldErrors(e)),
  });
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const r = validate(passwordResetRequestSchema, { email: new FormData(e.currentTarget).get('email') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    reset.mutate(r.data);
  }
  return (
    <FormSheet
      title="Reset your password"
      lede="We will mail you a link to choose a new one."
      footer={<Link to="/sign-in">Back to sign in</Link>}
    >
      {reset.isSuccess ? (
        <div className="space-y-4">
          <Notice tone="success" title="Mail on its way">
            If an account uses that address, a reset link is in its inbox now. The link works once.
          </Notice>
          <OutboxHint />
        </div>
      ) : (
        <form noValidate onSubmit={submit} className="space-y-5">
          <TextField label="E-mail" name="email" type="email" autoComplete="email" error={errors.email} autoFocus />
          {reset.isError && !Object.keys(errors).length ? <FormError error={reset.error} /> : null}
          <div className="flex justify-end">
            <Button type="submit" busy={reset.isPending} busyLabel="Sending…">
              Send reset link
            </Button>
          </div>
        </form>
      )}
    </FormSheet>
  );
}
