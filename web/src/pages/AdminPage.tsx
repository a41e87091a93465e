import { useAdminLabs, useAdminUsers } from '../api/queries.js';
import type { AdminLab, AdminUser } from '../api/contract.js';
import { useSignedIn } from '../auth/useSignedIn.js';
import { formatDate, groupThousands } from '../format.js';
import { EmptyState, ErrorPanel, PageHeading, Section, SkeletonTable, SortableTable, type Column } from '../ui/index.js';

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

export function AdminPage() {
  const me = useSignedIn();
  if (!me.user.isAdmin) {
    return (
      <div>
        <PageHeading title="Site administration" />
        <ErrorPanel title="Not allowed" error={new Error('this page is for site administrators; your account does not have that role')} />
      </div>
    );
  }
  return <AdminTables />;
}

function AdminTables() {
  const labs = useAdminLabs();
  const users = useAdminUsers();
  return (
    <div className="space-y-8">
      <PageHeading overline="Site-wide" title="Site administration" lede="Every lab and every account on this installation." />
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
