import { Link, useSearchParams } from 'react-router';
import type { AuditEvent, AuditQueryInput } from '../../api/contract.js';
import { useAdminLabs, useAdminUsers } from '../../api/queries.js';
import { formatDateTime } from '../../format.js';
import { buttonClass, EmptyState, ErrorPanel, Section, SelectField, SkeletonTable, SortableTable, TextField, type Column } from '../../ui/index.js';
import { auditDetailText } from './adminFormat.js';
import { auditCsvUrl, useAuditTrail } from './adminQueries.js';

const FILTERS = ['labId', 'actorId', 'personId', 'kind', 'from', 'to'] as const;

const columns: Column<AuditEvent>[] = [
  { key: 'at', header: 'When (UTC)', cell: (e) => <span className="tnum whitespace-nowrap">{formatDateTime(e.at)}</span>, sortValue: (e) => e.at },
  { key: 'actor', header: 'Who', cell: (e) => e.actorName ?? <span className="text-ink-faint">{e.actorId ? 'former account' : 'the system'}</span>, sortValue: (e) => e.actorName },
  { key: 'action', header: 'What', cell: (e) => <span className="font-mono text-xs">{e.action}</span>, sortValue: (e) => e.action },
  { key: 'about', header: 'About', cell: (e) => <AuditSubject event={e} />, sortValue: (e) => e.subjectName ?? e.subjectType },
  { key: 'lab', header: 'Lab', cell: (e) => e.labName ?? '—', sortValue: (e) => e.labName },
  { key: 'reason', header: 'Why', cell: (e) => e.reason ?? <span className="text-ink-faint">—</span>, sortValue: (e) => e.reason },
  { key: 'detail', header: 'Detail', cell: (e) => <span className="text-xs text-ink-soft">{auditDetailText(e.detail)}</span> },
];

/** A person by name; a figure, run or series by its kind and title, linked to its page; anything else by its kind. */
function AuditSubject({ event: e }: { event: AuditEvent }) {
  if (e.subjectName === null) return <span className="text-ink-faint">{e.subjectType ?? '—'}</span>;
  if (e.subjectType === 'user') return <>{e.subjectName}</>;
  return (
    <>
      <span className="text-ink-faint">{e.subjectType} </span>
      {e.subjectHref ? <Link to={e.subjectHref}>{e.subjectName}</Link> : e.subjectName}
    </>
  );
}

export function AuditTab() {
  const [params, setParams] = useSearchParams();
  const q: AuditQueryInput = {};
  for (const f of FILTERS) {
    const v = params.get(f);
    if (v) q[f] = v;
  }
  const trail = useAuditTrail(q);
  const labs = useAdminLabs();
  const users = useAdminUsers();
  const set = (k: (typeof FILTERS)[number], v: string) =>
    setParams((p) => {
      const n = new URLSearchParams(p);
      if (v) n.set(k, v);
      else n.delete(k);
      return n;
    });
  return (
    <Section
      title="Audit trail"
      description="Every admin action, billing event, role change and publication, append-only: who, when, what and why. Person finds what someone did and what was done to them."
      actions={<a className={`${buttonClass('quiet', 'sm')} no-underline`} href={auditCsvUrl(q)} download>Export CSV</a>}
    >
      <form className="mb-5 grid grid-cols-3 gap-3 lg:grid-cols-5" aria-label="filter the trail" onSubmit={(e) => e.preventDefault()}>
        <SelectField label="Lab" value={q.labId ?? ''} onChange={(e) => set('labId', e.target.value)}>
          <option value="">all labs</option>
          {labs.data?.labs.map((l) => <option key={l.id} value={l.id}>{l.name}</option>)}
        </SelectField>
        <SelectField label="Person" value={q.personId ?? ''} onChange={(e) => set('personId', e.target.value)}>
          <option value="">everyone</option>
          {users.data?.users.map((u) => <option key={u.id} value={u.id}>{u.name}</option>)}
        </SelectField>
        <SelectField label="Kind" value={q.kind ?? ''} onChange={(e) => set('kind', e.target.value)}>
          <option value="">all kinds</option>
          {[...new Set((trail.data?.kinds ?? []).map((k) => `${k.split('.')[0]}.`))].map((p) => <option key={p} value={p}>{p}*</option>)}
          {(trail.data?.kinds ?? []).map((k) => <option key={k} value={k}>{k}</option>)}
        </SelectField>
        <TextField label="From" type="date" value={q.from ?? ''} onChange={(e) => set('from', e.target.value)} />
        <TextField label="To" type="date" value={q.to ?? ''} onChange={(e) => set('to', e.target.value)} />
      </form>
      {trail.isPending ? (
        <SkeletonTable rows={6} columns={7} />
      ) : trail.isError ? (
        <ErrorPanel error={trail.error} />
      ) : trail.data.events.length === 0 ? (
        <EmptyState title="Nothing matches these filters" />
      ) : (
        <SortableTable caption="audit trail" columns={columns} rows={trail.data.events} rowKey={(e) => String(e.id)} initialSort={{ key: 'at', order: 'desc' }} />
      )}
    </Section>
  );
}
