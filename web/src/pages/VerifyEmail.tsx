import { useEffect, useRef } from 'react';
import { Link, useSearchParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys } from '../api/queries.js';
import { verifyEmailRequestSchema, type UserResponse } from '../api/contract.js';
import { ErrorPanel, FormSheet, Notice, SkeletonBlock } from '../ui/index.js';

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
