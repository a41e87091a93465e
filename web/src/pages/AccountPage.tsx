import { useRef, useState, type FormEvent } from 'react';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys, useSetActiveLab, useSignOut, useTokens } from '../api/queries.js';
import { createTokenRequestSchema, type ApiToken, type CreateTokenResponse } from '../api/contract.js';
import { useSignedIn } from '../auth/useSignedIn.js';
import { formatDateTime } from '../format.js';
import {
  Button, CopyButton, EmptyState, ErrorPanel, FactList, FormError, Notice, PageHeading, Section, SelectField, SkeletonTable,
  SortableTable, TextField, validate, serverFieldErrors, type Column, type FieldErrors,
} from '../ui/index.js';

export function AccountPage() {
  const me = useSignedIn();
  const signOut = useSignOut();
  return (
    <div className="space-y-8">
      <PageHeading
        overline="Account"
        title={me.user.name}
        actions={
          <Button tone="quiet" busy={signOut.isPending} onClick={() => signOut.mutate()}>
            Sign out
          </Button>
        }
      />
      <div className="grid grid-cols-1 gap-8 md:grid-cols-2">
        <Section title="Profile">
          <FactList
            items={[
              { term: 'Name', value: me.user.name },
              { term: 'E-mail', value: <span className="break-all font-mono text-[13px]">{me.user.email}</span> },
              {
                term: 'Address',
                value: me.user.emailVerified ? (
                  <span className="text-leaf">confirmed</span>
                ) : (
                  <span className="text-amber">not confirmed yet — open the link we mailed you</span>
                ),
              },
              { term: 'Role on the site', value: me.user.isAdmin ? 'site administrator' : 'member' },
            ]}
          />
        </Section>
        <ActiveLab />
      </div>
      <Tokens />
    </div>
  );
}

function ActiveLab() {
  const me = useSignedIn();
  const setLab = useSetActiveLab();
  return (
    <Section title="Active lab" description="Runs, quotas and credits shown across the site follow this lab.">
      {me.labs.length === 0 ? (
        <p className="text-sm text-ink-soft">You are not in a lab yet. Accept an invitation or create one on the Lab page.</p>
      ) : (
        <div className="space-y-3">
          <SelectField label="Work in" value={me.activeLabId ?? ''} disabled={setLab.isPending} onChange={(e) => setLab.mutate(e.target.value)}>
            {me.activeLabId ? null : <option value="">choose a lab</option>}
            {me.labs.map((l) => (
              <option key={l.id} value={l.id}>
                {l.name} — {l.role === 'manager' ? 'manager' : 'author'}
              </option>
            ))}
          </SelectField>
          {setLab.isError ? <FormError error={setLab.error} /> : null}
        </div>
      )}
    </Section>
  );
}

function Tokens() {
  const tokens = useTokens();
  const qc = useQueryClient();
  const [errors, setErrors] = useState<FieldErrors>({});
  const [secret, setSecret] = useState<CreateTokenResponse | null>(null);
  const secretEl = useRef<HTMLElement>(null);
  const create = useMutation({
    mutationFn: (body: unknown) => api<CreateTokenResponse>('POST', '/api/me/tokens', body),
    onSuccess: (r) => {
      setSecret(r);
      void qc.invalidateQueries({ queryKey: keys.tokens });
    },
    onError: (e) => setErrors(serverFieldErrors(e)),
  });
  const revoke = useMutation({
    mutationFn: (id: string) => api<void>('DELETE', `/api/me/tokens/${encodeURIComponent(id)}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.tokens }),
  });

  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const r = validate(createTokenRequestSchema, { label: new FormData(form).get('label') });
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    create.mutate(r.data, { onSuccess: () => form.reset() });
  }

  const columns: Column<ApiToken>[] = [
    { key: 'label', header: 'Label', cell: (t) => <span className="font-medium">{t.label}</span>, sortValue: (t) => t.label.toLowerCase() },
    { key: 'prefix', header: 'Starts with', cell: (t) => <span className="font-mono text-xs">{t.prefix}…</span> },
    { key: 'createdAt', header: 'Created', cell: (t) => formatDateTime(t.createdAt), sortValue: (t) => t.createdAt },
    { key: 'lastUsedAt', header: 'Last used', cell: (t) => (t.lastUsedAt ? formatDateTime(t.lastUsedAt) : <span className="text-ink-faint">never</span>), sortValue: (t) => t.lastUsedAt },
    {
      key: 'revoke',
      header: '',
      align: 'right',
      cell: (t) => (
        <Button tone="danger" size="sm" busy={revoke.isPending && revoke.variables === t.id} onClick={() => revoke.mutate(t.id)}>
          Revoke
        </Button>
      ),
    },
  ];

  return (
    <Section
      title="Personal API tokens"
      description={
        <>
          For scripts and the command line: send <span className="font-mono">Authorization: Bearer tw_…</span>. A token
          acts as you, in every lab you belong to.
        </>
      }
    >
      <form noValidate onSubmit={submit} className="mb-6 flex items-start gap-3">
        <TextField label="New token label" name="label" placeholder="e.g. cluster submit script" error={errors.label} fieldClassName="w-80" />
        <Button type="submit" className="mt-7" busy={create.isPending} busyLabel="Creating…">
          Create token
        </Button>
      </form>
      {create.isError && !Object.keys(errors).length ? (
        <div className="mb-4">
          <FormError error={create.error} />
        </div>
      ) : null}
      {secret ? (
        <div className="mb-6">
          <Notice tone="success" title={`Token “${secret.token.label}” created — copy it now, it is shown only once`}>
            <div className="mt-2 flex items-center gap-3">
              <code ref={secretEl} data-testid="token-secret" className="select-all rounded border border-rule bg-sheet px-3 py-1.5 font-mono text-sm text-ink">
                {secret.secret}
              </code>
              <CopyButton text={secret.secret} target={secretEl} />
              <Button size="sm" tone="quiet" onClick={() => setSecret(null)}>
                Done
              </Button>
            </div>
          </Notice>
        </div>
      ) : null}
      {revoke.isError ? (
        <div className="mb-4">
          <FormError error={revoke.error} />
        </div>
      ) : null}
      {tokens.isPending ? (
        <SkeletonTable rows={2} columns={5} />
      ) : tokens.isError ? (
        <ErrorPanel error={tokens.error} />
      ) : tokens.data.tokens.length === 0 ? (
        <EmptyState title="No tokens">Create one above when a script needs to act for you.</EmptyState>
      ) : (
        <SortableTable caption="API tokens" columns={columns} rows={tokens.data.tokens} rowKey={(t) => t.id} initialSort={{ key: 'createdAt', order: 'desc' }} />
      )}
    </Section>
  );
}

