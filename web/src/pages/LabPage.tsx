import { useState, type FormEvent } from 'react';
import { useNavigate } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys, useLab } from '../api/queries.js';
import {
  createInvitationRequestSchema, createLabRequestSchema, quotaRequestSchema, roleRequestSchema, type Invitation, type LabResponse,
  type Member, type MeResponse, type QuotaRequest,
} from '../api/contract.js';
import { useSignedIn } from '../auth/useSignedIn.js';
import { formatDate, groupThousands } from '../format.js';
import {
  Button, Count, EmptyState, ErrorPanel, FormError, LinkButton, Notice, PageHeading, Section, SelectField, SkeletonTable,
  SortableTable, TextField, validate, serverFieldErrors, type Column, type FieldErrors,
} from '../ui/index.js';

export function LabPage() {
  const me = useSignedIn();
  const active = me.labs.find((l) => l.id === me.activeLabId) ?? null;
  if (!active) return <NoLab me={me} />;
  return <LabDetail labId={active.id} isManager={active.role === 'manager'} me={me} />;
}

function LabDetail({ labId, isManager, me }: { labId: string; isManager: boolean; me: MeResponse }) {
  const lab = useLab(labId);
  const qc = useQueryClient();
  const navigate = useNavigate();
  const remove = useMutation({
    mutationFn: (userId: string) => api<void>('DELETE', `/api/labs/${labId}/members/${userId}`),
    onSuccess: async (_r, userId) => {
      if (userId === me.user.id) {
        await qc.invalidateQueries({ queryKey: keys.me });
        navigate('/account');
      } else {
        await qc.invalidateQueries({ queryKey: keys.lab(labId) });
      }
    },
  });

  if (lab.isPending) return <SkeletonTable rows={4} columns={5} />;
  if (lab.isError) return <ErrorPanel error={lab.error} />;
  const { members, invitations } = lab.data;

  const columns: Column<Member>[] = [
    {
      key: 'name',
      header: 'Member',
      sortValue: (m) => m.name.toLowerCase(),
      cell: (m) => (
        <div>
          <p className="font-medium">
            {m.name}
            {m.userId === me.user.id ? <span className="ml-2 text-xs font-normal text-ink-faint">you</span> : null}
          </p>
          <p className="font-mono text-xs text-ink-soft">{m.email}</p>
        </div>
      ),
    },
    {
      key: 'role',
      header: 'Role',
      sortValue: (m) => m.role,
      // site admins may change roles in any lab (the API allows it), even where they are only an author
      cell: (m) => (isManager || me.user.isAdmin ? <RoleEditor labId={labId} member={m} isSelf={m.userId === me.user.id} /> : m.role === 'manager' ? 'manager' : 'author'),
    },
    {
      key: 'quota',
      header: 'Monthly quota',
      sortValue: (m) => m.monthlyQuota ?? Number.MAX_SAFE_INTEGER,
      cell: (m) => (isManager ? <QuotaEditor labId={labId} member={m} /> : <QuotaText quota={m.monthlyQuota} />),
    },
    { key: 'joinedAt', header: 'Joined', sortValue: (m) => m.joinedAt, cell: (m) => formatDate(m.joinedAt) },
    {
      key: 'actions',
      header: '',
      align: 'right',
      cell: (m) =>
        m.userId === me.user.id ? (
          <Button tone="danger" size="sm" busy={remove.isPending && remove.variables === m.userId} onClick={() => confirm(`Leave ${lab.data.lab.name}?`) && remove.mutate(m.userId)}>
            Leave lab
          </Button>
        ) : isManager ? (
          <Button tone="danger" size="sm" busy={remove.isPending && remove.variables === m.userId} onClick={() => confirm(`Remove ${m.name} from the lab?`) && remove.mutate(m.userId)}>
            Remove
          </Button>
        ) : null,
    },
  ];

  return (
    <div className="space-y-8">
      <PageHeading
        overline={isManager ? 'Your lab · you manage it' : 'Your lab'}
        title={lab.data.lab.name}
        lede={`${members.length} ${members.length === 1 ? 'member' : 'members'} · since ${formatDate(lab.data.lab.createdAt)}`}
        actions={<LinkButton tone="quiet" to={`/lab/credits?labId=${labId}`}>Credits</LinkButton>}
      />
      <Section
        title="Members"
        description={isManager ? 'Set a monthly compute quota in credits per member; leave it empty for no personal limit.' : 'Quotas are set by the lab’s managers.'}
      >
        {remove.isError ? (
          <div className="mb-4">
            <FormError error={remove.error} />
          </div>
        ) : null}
        <SortableTable caption="lab members" columns={columns} rows={members} rowKey={(m) => m.userId} initialSort={{ key: 'name', order: 'asc' }} />
      </Section>
      {isManager ? (
        <div className="grid grid-cols-1 gap-8 md:grid-cols-[1fr_1.3fr]">
          <InviteForm labId={labId} />
          <PendingInvitations labId={labId} invitations={invitations} />
        </div>
      ) : null}
    </div>
  );
}

/**
 * Author ↔ manager: choosing the other role asks why (the reason goes to the audit trail) before
 * Save appears. The server keeps at least one manager and says so when a change would break that.
 */
function RoleEditor({ labId, member, isSelf }: { labId: string; member: Member; isSelf: boolean }) {
  const [role, setRole] = useState(member.role);
  const [reason, setReason] = useState('');
  const [error, setError] = useState<string>();
  const qc = useQueryClient();
  const save = useMutation({
    mutationFn: (body: unknown) => api<unknown>('PUT', `/api/labs/${labId}/members/${member.userId}/role`, body),
    onSuccess: async () => {
      setReason('');
      await qc.invalidateQueries({ queryKey: keys.lab(labId) });
      // a manager who stepped down loses the manager's controls at once
      if (isSelf) await qc.invalidateQueries({ queryKey: keys.me });
    },
    onError: (e) => {
      const fields = serverFieldErrors(e);
      setError(fields.reason ?? fields.role ?? (e as Error).message);
    },
  });
  function submit(e: FormEvent) {
    e.preventDefault();
    const r = validate(roleRequestSchema, { role, reason });
    if (!r.ok) return setError(r.errors.reason ?? Object.values(r.errors)[0]);
    setError(undefined);
    save.mutate(r.data);
  }
  const dirty = role !== member.role;
  return (
    <form onSubmit={submit} className="space-y-1.5" aria-label={`change the permissions of ${member.name}`}>
      <select
        aria-label={`permissions of ${member.name}`}
        value={role}
        onChange={(e) => {
          setRole(e.target.value as Member['role']);
          setError(undefined);
        }}
        className="rounded-md border border-rule bg-sheet px-2 py-1 text-sm"
      >
        <option value="author">author</option>
        <option value="manager">manager</option>
      </select>
      {dirty ? (
        <div className="flex items-start gap-2">
          <input
            aria-label={`reason for changing the permissions of ${member.name}`}
            value={reason}
            placeholder="why (kept in the audit trail)"
            onChange={(e) => setReason(e.target.value)}
            className={`w-52 rounded-md border bg-sheet px-2 py-1 text-sm ${error ? 'border-stamp' : 'border-rule'}`}
          />
          <Button type="submit" size="sm" busy={save.isPending} busyLabel="Saving…">
            {role === 'manager' ? 'Make manager' : 'Make author'}
          </Button>
        </div>
      ) : null}
      {error ? <p role="alert" className="max-w-64 text-xs text-stamp">{error}</p> : null}
    </form>
  );
}

function QuotaText({ quota }: { quota: number | null }) {
  return quota === null ? <span className="text-ink-faint">no limit</span> : <Count n={quota} unit="credits" showPower={false} />;
}

/** Inline edit: the field starts with the saved value and Save appears only once it differs. */
function QuotaEditor({ labId, member }: { labId: string; member: Member }) {
  const saved = member.monthlyQuota === null ? '' : groupThousands(member.monthlyQuota);
  const [value, setValue] = useState(saved);
  const [error, setError] = useState<string>();
  const qc = useQueryClient();
  const save = useMutation({
    mutationFn: (body: QuotaRequest) => api<unknown>('PUT', `/api/labs/${labId}/members/${member.userId}/quota`, body),
    // the field shows what was saved in the page's own spelling ("3000" becomes "3,000"), so Save goes away
    onSuccess: (_res, body) => {
      setValue(body.monthlyQuota === null ? '' : groupThousands(body.monthlyQuota));
      return qc.invalidateQueries({ queryKey: keys.lab(labId) });
    },
    onError: (e) => setError(serverFieldErrors(e).monthlyQuota ?? (e as Error).message),
  });
  function submit(e: FormEvent) {
    e.preventDefault();
    const trimmed = value.trim().replace(/[,\s_]/g, '');
    const r = validate(quotaRequestSchema, { monthlyQuota: trimmed === '' ? null : Number(trimmed) });
    if (!r.ok) return setError(r.errors.monthlyQuota ?? Object.values(r.errors)[0]);
    setError(undefined);
    save.mutate(r.data);
  }
  const dirty = value.trim() !== saved;
  return (
    <form onSubmit={submit} className="flex items-start gap-2" aria-label={`monthly quota of ${member.name}`}>
      <div>
        <div className="flex items-center gap-1.5">
          <input
            aria-label={`monthly quota of ${member.name} in credits`}
            inputMode="numeric"
            value={value}
            placeholder="no limit"
            onChange={(e) => {
              setValue(e.target.value);
              setError(undefined); // an old complaint must not stand beside a new value
            }}
            className={`w-28 rounded-md border bg-sheet px-2 py-1 text-right text-sm tnum ${error ? 'border-stamp' : 'border-rule'}`}
          />
          <span className="text-xs text-ink-soft">credits</span>
        </div>
        {error ? <p role="alert" className="mt-1 max-w-48 text-xs text-stamp">{error}</p> : null}
      </div>
      {dirty ? (
        <Button type="submit" size="sm" busy={save.isPending} busyLabel="Saving…">
          Save
        </Button>
      ) : null}
    </form>
  );
}

function InviteForm({ labId }: { labId: string }) {
  const qc = useQueryClient();
  const [errors, setErrors] = useState<FieldErrors>({});
  const [sentTo, setSentTo] = useState<string | null>(null);
  const invite = useMutation({
    mutationFn: (body: unknown) => api<unknown>('POST', `/api/labs/${labId}/invitations`, body),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.lab(labId) }),
    onError: (e) => setErrors(serverFieldErrors(e)),
  });
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const data = new FormData(form);
    const r = validate(createInvitationRequestSchema, { email: data.get('email'), role: data.get('role') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    invite.mutate(r.data, {
      onSuccess: () => {
        setSentTo(r.data.email);
        form.reset();
      },
    });
  }
  return (
    <Section title="Invite someone" description="They get a mail with a link; it works for that address only.">
      <form noValidate onSubmit={submit} className="space-y-4">
        <TextField label="E-mail" name="email" type="email" error={errors.email} />
        <SelectField label="Role" name="role" defaultValue="author" error={errors.role}>
          <option value="author">author — creates runs and figures</option>
          <option value="manager">manager — also invites and sets quotas</option>
        </SelectField>
        {invite.isError && !Object.keys(errors).length ? <FormError error={invite.error} /> : null}
        {sentTo && invite.isSuccess ? <Notice tone="success">Invitation mailed to {sentTo}.</Notice> : null}
        <Button type="submit" busy={invite.isPending} busyLabel="Sending…">
          Send invitation
        </Button>
      </form>
    </Section>
  );
}

function PendingInvitations({ labId, invitations }: { labId: string; invitations: Invitation[] }) {
  const qc = useQueryClient();
  const withdraw = useMutation({
    mutationFn: (id: string) => api<void>('DELETE', `/api/labs/${labId}/invitations/${id}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.lab(labId) }),
  });
  const columns: Column<Invitation>[] = [
    { key: 'email', header: 'E-mail', sortValue: (i) => i.email, cell: (i) => <span className="font-mono text-xs">{i.email}</span> },
    { key: 'role', header: 'Role', sortValue: (i) => i.role, cell: (i) => i.role },
    { key: 'expiresAt', header: 'Open until', sortValue: (i) => i.expiresAt, cell: (i) => formatDate(i.expiresAt) },
    {
      key: 'withdraw',
      header: '',
      align: 'right',
      cell: (i) => (
        <Button tone="danger" size="sm" busy={withdraw.isPending && withdraw.variables === i.id} onClick={() => withdraw.mutate(i.id)}>
          Withdraw
        </Button>
      ),
    },
  ];
  return (
    <Section title="Pending invitations">
      {withdraw.isError ? (
        <div className="mb-4">
          <FormError error={withdraw.error} />
        </div>
      ) : null}
      {invitations.length === 0 ? (
        <EmptyState title="No open invitations">Invitations you send wait here until they are accepted.</EmptyState>
      ) : (
        <SortableTable caption="pending invitations" columns={columns} rows={invitations} rowKey={(i) => i.id} initialSort={{ key: 'expiresAt', order: 'asc' }} />
      )}
    </Section>
  );
}

function NoLab({ me }: { me: MeResponse }) {
  const qc = useQueryClient();
  const [errors, setErrors] = useState<FieldErrors>({});
  const create = useMutation({
    mutationFn: (body: unknown) => api<LabResponse>('POST', '/api/labs', body),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
    onError: (e) => setErrors(serverFieldErrors(e)),
  });
  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const r = validate(createLabRequestSchema, { name: new FormData(e.currentTarget).get('name') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    create.mutate(r.data);
  }
  return (
    <div className="space-y-8">
      <PageHeading title="Your lab" lede="A lab shares one compute budget; its managers invite members and set quotas." />
      <div className="grid grid-cols-1 gap-8 md:grid-cols-2">
        <Section title="Join a lab">
          <p className="text-sm text-ink-soft">Ask a lab manager to invite {me.user.email}. The mail has a link that adds you to the lab.</p>
        </Section>
        <Section title="Start a new lab" description="You become its manager.">
          {!me.user.emailVerified ? (
            <Notice tone="warning" title="Confirm your e-mail first">
              Open the confirmation link we mailed to {me.user.email}; then you can create a lab.
            </Notice>
          ) : (
            <form noValidate onSubmit={submit} className="space-y-4">
              <TextField label="Lab name" name="name" error={errors.name} />
              {create.isError && !Object.keys(errors).length ? <FormError error={create.error} /> : null}
              <Button type="submit" busy={create.isPending} busyLabel="Creating…">
                Create lab
              </Button>
            </form>
          )}
        </Section>
      </div>
    </div>
  );
}
