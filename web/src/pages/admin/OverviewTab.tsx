import { Link } from 'react-router';
import { useAdminLabs, useAdminUsers } from '../../api/queries.js';
import type { AdminLab, AdminUser } from '../../api/contract.js';
import { formatDate, groupThousands } from '../../format.js';
import { EmptyState, ErrorPanel, Notice, Section, SkeletonTable, SortableTable, type Column } from '../../ui/index.js';
import { useAdminUsage } from './adminQueries.js';
import { StandingBadge } from './StandingBadge.js';

const labColumns: Column<AdminLab>[] = [
  { key: 'name', header: 'Lab', cell: (l) => <span className="font-medium">{l.name}</span>, sortValue: (l) => l.name.toLowerCase() },
  { key: 'members', header: 'Members', align: 'right', cell: (l) => groupThousands(l.members), sortValue: (l) => l.members },
  { key: 'runs', header: 'Runs', align: 'right', cell: (l) => groupThousands(l.runs), sortValue: (l) => l.runs },
  { key: 'createdAt', header: 'Created', cell: (l) => formatDate(l.createdAt), sortValue: (l) => l.createdAt },
];

const userColumns: Column<AdminUser>[] = [
  { key: 'name', header: 'Name', cell: (u) => <span className="font-medium">{u.name}</span>, sortValue: (u) => u.name.toLowerCase() },
  { key: 'email', header: 'E-mail', cell: (u) => <span className="font-mono text-xs">{u.email}</span>, sortValue: (u) => u.email },
  { key: 'labs', header: 'Labs', cell: (u) => (u.labs.length ? u.labs.join(', ') : <span className="text-ink-faint">none</span>), sortValue: (u) => u.labs.length },
  { key: 'isAdmin', header: 'Site admin', cell: (u) => (u.isAdmin ? 'yes' : '—'), sortValue: (u) => (u.isAdmin ? 1 : 0) },
  { key: 'createdAt', header: 'Joined', cell: (u) => formatDate(u.createdAt), sortValue: (u) => u.createdAt },
];

/** Who needs attention (labs and members over or close to quota), then every lab and account. */
export function OverviewTab() {
  const labs = useAdminLabs();
  const users = useAdminUsers();
  const usage = useAdminUsage(6);
  const flagged = usage.data?.labs.filter((l) => l.standing !== 'ok' || l.suspendedAt) ?? [];
  const people = usage.data?.labs.flatMap((l) => l.members.filter((m) => m.standing !== 'ok').map((m) => ({ ...m, labName: l.name }))) ?? [];
  return (
    <div className="space-y-8">
      <Section title="Needs attention" description="Labs and members over or close to quota this month, and suspended labs.">
        {usage.isPending ? (
          <SkeletonTable rows={2} columns={3} />
        ) : usage.isError ? (
          <ErrorPanel error={usage.error} />
        ) : flagged.length === 0 && people.length === 0 ? (
          <Notice tone="success" title="Every lab and member is within quota." />
        ) : (
          <ul className="space-y-2 text-sm" aria-label="needs attention">
            {flagged.map((l) => (
              <li key={l.labId} className="flex flex-wrap items-center gap-2">
                <StandingBadge standing={l.standing} />
                {l.suspendedAt ? <span className="text-xs font-medium text-stamp">suspended</span> : null}
                <Link to={`/admin?tab=usage&lab=${l.labId}`} className="font-medium">{l.name}</Link>
                <span className="text-ink-soft">{l.standingNote}</span>
              </li>
            ))}
            {people.map((m) => (
              <li key={`${m.labName}-${m.memberId}`} className="flex flex-wrap items-center gap-2">
                <StandingBadge standing={m.standing} />
                <span className="font-medium">{m.name}</span>
                <span className="text-ink-soft">
                  in {m.labName}: {groupThousands(m.usedThisMonth)} of a {groupThousands(m.monthlyQuota ?? 0)}-credit monthly quota
                </span>
              </li>
            ))}
          </ul>
        )}
      </Section>
      <Section title="Labs" description={labs.data ? `${groupThousands(labs.data.labs.length)} labs` : undefined}>
        {labs.isPending ? (
          <SkeletonTable rows={3} columns={4} />
        ) : labs.isError ? (
          <ErrorPanel error={labs.error} />
        ) : labs.data.labs.length === 0 ? (
          <EmptyState title="No labs yet" />
        ) : (
          <SortableTable caption="labs" columns={labColumns} rows={labs.data.labs} rowKey={(l) => l.id} initialSort={{ key: 'name', order: 'asc' }} />
        )}
      </Section>
      <Section title="People" description={users.data ? `${groupThousands(users.data.users.length)} accounts` : undefined}>
        {users.isPending ? (
          <SkeletonTable rows={5} columns={5} />
        ) : users.isError ? (
          <ErrorPanel error={users.error} />
        ) : (
          <SortableTable caption="users" columns={userColumns} rows={users.data.users} rowKey={(u) => u.id} initialSort={{ key: 'name', order: 'asc' }} />
        )}
      </Section>
    </div>
  );
}
