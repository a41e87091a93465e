import { useState, type FormEvent, type ReactNode } from 'react';
import { Link, useSearchParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { isStatus } from '../api/ApiError.js';
import { keys, useResetLinkCheck } from '../api/queries.js';
import { mailedLinkLifetime, mailedTokenSchema, PASSWORD_MIN_LENGTH, passwordResetCompleteRequestSchema, type MailedLinkRefusal } from '../api/contract.js';
import { formatDateTime } from '../format.js';
import { Button, EmptyState, ErrorPanel, FormError, FormSheet, LinkButton, NewPasswordField, Notice, SkeletonBlock, TextField, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';

/** Why a link is refused, in words, with what to do about it; every case offers a new link. */
const REFUSALS: Record<MailedLinkRefusal | 'incomplete', { title: string; why: string }> = {
  incomplete: {
    title: 'This reset link is incomplete',
    why: 'Part of the address is missing or changed. Open the link from the mail again, or copy all of it into the address bar.',
  },
  unknown: {
    title: 'This reset link is not valid',
    why: 'It does not match a link we mailed. It may have been mistyped, or it belongs to an account that no longer exists.',
  },
  used: {
    title: 'This reset link was already used',
    why: 'It has set a new password already, or a newer link from another mail has. Each link works once.',
  },
  expired: {
    title: 'This reset link has expired',
    why: `A reset link works for ${mailedLinkLifetime('reset_password')} after it is mailed.`,
  },
};

function RefusedLink({ reason }: { reason: keyof typeof REFUSALS }) {
  const { title, why } = REFUSALS[reason];
  return (
    <EmptyState
      title={title}
      action={
        <>
          <LinkButton to="/forgot-password">Ask for a new link</LinkButton>
          <LinkButton to="/sign-in" tone="quiet">
            Sign in
          </LinkButton>
        </>
      }
    >
      {why}
    </EmptyState>
  );
}

export function ResetPassword() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';
  // the shape is checked here too, so a link cut short is said without asking the API
  const wellFormed = mailedTokenSchema.safeParse(token).success;
  const check = useResetLinkCheck(token, wellFormed);
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

  let body: ReactNode;
  if (complete.isSuccess) {
    body = (
      <div className="space-y-4">
        <Notice tone="success" title="Password changed">
          You were signed out everywhere. Sign in with the new password.
        </Notice>
        <Link to="/sign-in" className="text-sm">
          Sign in
        </Link>
      </div>
    );
  } else if (!wellFormed || (check.isError && isStatus(check.error, 400))) {
    body = <RefusedLink reason="incomplete" />;
  } else if (check.isPending) {
    body = <SkeletonBlock lines={3} />;
  } else if (check.isError) {
    body = <ErrorPanel error={check.error} />;
  } else if (!check.data.usable) {
    body = <RefusedLink reason={check.data.reason} />;
  } else {
    body = (
      <form noValidate onSubmit={submit} className="space-y-5">
        <NewPasswordField label="New password" minLength={PASSWORD_MIN_LENGTH} error={errors.password} autoFocus />
        <TextField label="Repeat it" name="repeat" type="password" autoComplete="new-password" error={errors.repeat} />
        {errors.token ? <FormError error={new Error(`link: ${errors.token}`)} /> : null}
        {complete.isError && !Object.keys(errors).length ? (
          <div className="space-y-2">
            <FormError error={complete.error} />
            {/* the link can run out between opening the page and saving */}
            {isStatus(complete.error, 400) ? (
              <Link to="/forgot-password" className="text-sm">
                Ask for a new link
              </Link>
            ) : null}
          </div>
        ) : null}
        <p className="text-xs text-ink-soft">This link works until {formatDateTime(check.data.expiresAt)}.</p>
        <div className="flex justify-end">
          <Button type="submit" busy={complete.isPending} busyLabel="Saving…">
            Save password
          </Button>
        </div>
      </form>
    );
  }
  return <FormSheet title="Choose a new password">{body}</FormSheet>;
}
