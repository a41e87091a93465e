import { Link, useSearchParams } from 'react-router';
import { useSignedIn } from '../../auth/useSignedIn.js';
import { ErrorPanel, PageHeading } from '../../ui/index.js';
import { AuditTab } from './AuditTab.js';
import { FarmTab } from './FarmTab.js';
import { OverviewTab } from './OverviewTab.js';
import { StorageTab } from './StorageTab.js';
import { UsageTab } from './UsageTab.js';

/** The console's tabs, in the order an admin works through them; the tab lives in the address (?tab=). */
const TABS = [
  { id: 'overview', label: 'Overview', Component: OverviewTab },
  { id: 'usage', label: 'Usage and quotas', Component: UsageTab },
  { id: 'farm', label: 'Farm health', Component: FarmTab },
  { id: 'storage', label: 'Storage', Component: StorageTab },
  { id: 'audit', label: 'Audit trail', Component: AuditTab },
] as const;

export function AdminConsole() {
  const me = useSignedIn();
  const [params] = useSearchParams();
  if (!me.user.isAdmin) {
    return (
      <div>
        <PageHeading title="Site administration" />
        <ErrorPanel title="Not allowed" error={new Error('this page is for site administrators; your account does not have that role')} />
      </div>
    );
  }
  const current = TABS.find((t) => t.id === params.get('tab')) ?? TABS[0];
  return (
    <div className="space-y-8">
      <PageHeading overline="Site-wide" title="Site administration" lede="Usage and quotas of every lab, credits, the farm’s health, storage and the audit trail." />
      <nav aria-label="admin sections" className="flex gap-1 border-b border-rule">
        {TABS.map((t) => (
          <Link
            key={t.id}
            to={`/admin?tab=${t.id}`}
            aria-current={t.id === current.id ? 'page' : undefined}
            className={`-mb-px rounded-t-md border px-4 py-2 text-sm no-underline ${t.id === current.id ? 'border-rule border-b-sheet bg-sheet font-semibold text-ink' : 'border-transparent text-ink-soft hover:text-ink'}`}
          >
            {t.label}
          </Link>
        ))}
      </nav>
      <current.Component />
    </div>
  );
}
