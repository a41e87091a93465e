import { Link, useLocation, useNavigate, useParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys, useInvitation, useMe } from '../api/queries.js';
import type { LabResponse } from '../api/contract.js';
import { signInPathFor } from '../auth/nextPath.js';
import { Button, EmptyState, ErrorPanel, FormError, FormSheet, LinkButton, Notice, SkeletonBlock } from '../ui/index.js';
import { isStatus } from '../api/ApiError.js';

export function InvitationPage() {
  const { token = '' } = useParams();
  const invitation = useInvitation(token);
  const me = useMe();
  const location = useLocation();
  const navigate = useNavigate();
  const qc = useQueryClient();
  const accept = useMutation({
    mutationFn: () => api<LabResponse>('POST', `/api/invitations/${encodeURIComponent(token)}/accept`),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: keys.me });
      navigate('/lab');
    },
  });

  if (invitation.isPending || me.isPending) return <SkeletonBlock lines={4} />;
  if (invitation.isError) {
    if (isStatus(invitation.error, 404) || isStatus(invitation.error, 410)) {
      return (
        <EmptyState title="This invitation is no longer open" action={<Link to="/">Front page</Link>}>
          It may have expired, been withdrawn by the lab's manager, or already been accepted. Ask the manager for a
          new one.
        </EmptyState>
      );
    }
    // a link cut short or mangled on its way from the mail: the API refuses its token's shape (400)
    if (isStatus(invitation.error, 400)) {
      return (
        <EmptyState title="This invitation link is incomplete" action={<Link to="/">Front page</Link>}>
          Part of the address is missing or changed. Open the link from the invitation mail again, or copy all of it into
          the address bar.
        </EmptyState>
      );
    }
    return <ErrorPanel error={invitation.error} />;
  }
  const inv = invitation.data;
  const person = me.data;
  const emailMatches = person ? person.user.email.toLowerCase() === inv.email.toLowerCase() : false;
  const back = signInPathFor(location);

  return (
    <FormSheet title={`Join ${inv.labName}`} lede={`${inv.invitedBy} invited ${inv.email} to join as ${inv.role === 'manager' ? 'a lab manager' : 'an author'}.`}>
      {!person ? (
        <div className="space-y-4">
          <p className="text-sm text-ink-soft">Sign in with {inv.email} to accept, or create an account with that address first.</p>
          <div className="flex gap-3">
            <LinkButton to={back}>Sign in to accept</LinkButton>
            <LinkButton to={`/sign-up?email=${encodeURIComponent(inv.email)}&next=${encodeURIComponent(location.pathname)}`} tone="quiet">
              Create account
            </LinkButton>
          </div>
        </div>
      ) : !emailMatches ? (
        <Notice tone="warning" title="Signed in with another address">
          This invitation is for {inv.email}, and you are signed in as {person.user.email}. Sign out and sign in with
          the invited address to accept it.
        </Notice>
      ) : (
        <div className="space-y-4">
          {accept.isError ? <FormError error={accept.error} /> : null}
          <Button onClick={() => accept.mutate()} busy={accept.isPending} busyLabel="Joining…">
            Accept and join {inv.labName}
          </Button>
        </div>
      )}
    </FormSheet>
  );
}
