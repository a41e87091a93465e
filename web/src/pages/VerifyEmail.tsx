import { useEffect, useRef } from 'react';
import { Link, useLocation, useSearchParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { isStatus } from '../api/ApiError.js';
import { keys, useMe } from '../api/queries.js';
import { mailedLinkLifetime, verifyEmailRequestSchema, type UserResponse } from '../api/contract.js';
import { signInPathFor } from '../auth/nextPath.js';
import { Button, EmptyState, ErrorPanel, FormError, FormSheet, LinkButton, Notice, SkeletonBlock } from '../ui/index.js';
import { OutboxHint } from './OutboxHint.js';

export function VerifyEmail() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';
  const parsed = verifyEmailRequestSchema.safeParse({ token });
  const qc = useQueryClient();
  const verify = useMutation({
    meta: { quiet401: true },
    mutationFn: (body: { token: string }) => api<UserResponse>('POST', '/api/auth/verify-email', body),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
  });
  // Verify once per token, even when React mounts the page twice in development.
  const sent = useRef<string | null>(null);
  useEffect(() => {
    if (parsed.success && sent.current !== token) {
      sent.current = token;
      verify.mutate(parsed.data);
    }
  }, [token, parsed.success]); // eslint-disable-line react-hooks/exhaustive-deps

  return (
    <FormSheet title="Confirm your e-mail">
      {!parsed.success ? (
        <ErrorPanel title="This link is incomplete" error={new Error('the confirmation link has no valid token; open the link from the mail again')} />
      ) : verify.isSuccess ? (
        <div className="space-y-4">
          <Notice tone="success" title="E-mail confirmed">
            {verify.data.user.email} is confirmed. You can now start runs and create labs.
          </Notice>
          <Link to="/runs" className="text-sm">
            Go to your runs
          </Link>
        </div>
      ) : verify.isError && isStatus(verify.error, 400) ? (
        // the API's refusal of a link that is unknown, used or past its lifetime
        <DeadConfirmationLink />
      ) : verify.isError ? (
        <ErrorPanel title="Could not confirm" error={verify.error}>
          <Link to="/sign-in" className="text-sm">
            Sign in
          </Link>
        </ErrorPanel>
      ) : (
        <SkeletonBlock lines={2} />
      )}
    </FormSheet>
  );
}

/**
 * A confirmation link that no longer works, with the way to another one: asking needs the account
 * (POST /api/auth/verify-email/resend), so a signed-out reader signs in first and comes back here.
 */
function DeadConfirmationLink() {
  const me = useMe();
  const location = useLocation();
  const resend = useMutation({ mutationFn: () => api<unknown>('POST', '/api/auth/verify-email/resend') });
  if (me.isPending) return <SkeletonBlock lines={2} />;
  const person = me.data;
  // a link clicked a second time: nothing is left to do
  if (person?.user.emailVerified) {
    return (
      <Notice tone="success" title="Already confirmed">
        This link no longer works, but {person.user.email} is confirmed already. <Link to="/runs">Go to your runs</Link>
      </Notice>
    );
  }
  if (resend.isSuccess) {
    return (
      <div className="space-y-4">
        <Notice tone="success" title="Mail on its way">
          A new confirmation link is in the inbox of {person?.user.email}. It works once, for {mailedLinkLifetime('verify_email')}.
        </Notice>
        <OutboxHint />
      </div>
    );
  }
  return (
    <EmptyState
      title="This confirmation link no longer works"
      action={
        person ? (
          <Button onClick={() => resend.mutate()} busy={resend.isPending} busyLabel="Sending…">
            Mail a new link
          </Button>
        ) : (
          <LinkButton to={signInPathFor(location)}>Sign in to get a new link</LinkButton>
        )
      }
    >
      It was used already, its {mailedLinkLifetime('verify_email')} are over, or it was copied incompletely.
      {resend.isError ? <FormError error={resend.error} /> : null}
    </EmptyState>
  );
}
