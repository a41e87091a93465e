import { useSearchParams } from 'react-router';
import type { LabUsage, MemberUsage } from '../../api/contract.js';
import { formatDate, groupThousands } from '../../format.js';
import { buttonClass, EmptyState, ErrorPanel, FactList, FileSize, Notice, Section, SelectField, SkeletonTable, SortableTable, type Column } from '../../ui/index.js';
import { useAdminUsage, usageCsvUrl } from './adminQueries.js';
import { AllowanceForm, CreditsForm, SuspensionForm } from './LabActions.js';
import { StandingBadge } from './StandingBadge.js';
import { AllowanceChart, BalanceChart, ComputeByMonthChart, CreditsByMonthChart } from './UsageCharts.js';

const STANDING_RANK = { over: 0, close: 1, ok: 2 } as const;
const sum = (l: LabUsage, f: (m: LabUsage['months'][number]) => number) => l.months.reduce((s, m) => s + f(m), 0);

function labColumns(open: (id: string) => void): Column<LabUsage>[] {
  return [
    {
      key: 'name',
      header: 'Lab',
      cell: (l) => (
        <button type="button" className="text-left font-medium text-press underline-offset-2 hover:underline" onClick={() => open(l.labId)}>
          {l.name}
        </button>
      ),
      sortValue: (l) => l.name.toLowerCase(),
    },
    { key: 'standing', header: 'Standing', cell: (l) => <span className="flex flex-wrap items-center gap-1"><StandingBadge standing={l.standing} />{l.suspendedAt ? <span className="text-xs font-medium text-stamp">suspended</span> : null}</span>, sortValue: (l) => STANDING_RANK[l.standing] },
    { key: 'used', header: 'Used this month', align: 'right', cell: (l) => `${groupThousands(l.usedThisMonth)} credits`, sortValue: (l) => l.usedThisMonth },
    { key: 'allowance', header: 'Free allowance', align: 'right', cell: (l) => `${groupThousands(l.freeAllowance)} credits`, sortValue: (l) => l.freeAllowance },
    { key: 'available', header: 'Paid balance', align: 'right', cell: (l) => `${groupThousands(l.available)} credits`, sortValue: (l) => l.available },
    { key: 'reserved', header: 'Held', align: 'right', cell: (l) => `${groupThousands(l.reserved)} credits`, sortValue: (l) => l.reserved },
    { key: 'cpu', header: 'CPU-seconds', align: 'right', cell: (l) => groupThousands(Math.round(sum(l, (m) => m.cpuSeconds))), sortValue: (l) => sum(l, (m) => m.cpuSeconds) },
    { key: 'runs', header: 'Runs', align: 'right', cell: (l) => groupThousands(sum(l, (m) => m.runs)), sortValue: (l) => sum(l, (m) => m.runs) },
    { key: 'storage', header: 'Stored', align: 'right', cell: (l) => <FileSize bytes={l.storageBytes} />, sortValue: (l) => l.storageBytes },
  ];
}

const memberColumns: Column<MemberUsage>[] = [
  { key: 'name', header: 'Member', cell: (m) => <span className="font-medium">{m.name}</span>, sortValue: (m) => m.name.toLowerCase() },
  { key: 'role', header: 'Role', cell: (m) => m.role, sortValue: (m) => m.role },
  { key: 'standing', header: 'Standing', cell: (m) => <StandingBadge standing={m.standing} />, sortValue: (m) => STANDING_RANK[m.standing] },
  { key: 'used', header: 'Used this month', align: 'right', cell: (m) => `${groupThousands(m.usedThisMonth)} credits`, sortValue: (m) => m.usedThisMonth },
  { key: 'quota', header: 'Monthly quota', align: 'right', cell: (m) => (m.monthlyQuota === null ? 'no limit' : `${groupThousands(m.monthlyQuota)} credits`), sortValue: (m) => m.monthlyQuota },
  { key: 'cpu', header: 'CPU-seconds', align: 'right', cell: (m) => groupThousands(Math.round(m.months.reduce((s, x) => s + x.cpuSeconds, 0))), sortValue: (m) => m.months.reduce((s, x) => s + x.cpuSeconds, 0) },
  { key: 'runs', header: 'Runs', align: 'right', cell: (m) => groupThousands(m.months.reduce((s, x) => s + x.runs, 0)), sortValue: (m) => m.months.reduce((s, x) => s + x.runs, 0) },
  { key: 'storage', header: 'Stored', align: 'right', cell: (m) => <FileSize bytes={m.months.reduce((s, x) => s + x.storageBytes, 0)} />, sortValue: (m) => m.months.reduce((s, x) => s + x.storageBytes, 0) },
];

const monthColumns: Column<LabUsage['months'][number]>[] = [
  { key: 'month', header: 'Month', cell: (m) => <span className="font-mono text-xs">{m.month}</span>, sortValue: (m) => m.month },
  { key: 'credits', header: 'Credits used', align: 'right', cell: (m) => groupThousands(m.credits), sortValue: (m) => m.credits },
  { key: 'granted', header: 'Granted', align: 'right', cell: (m) => groupThousands(m.granted), sortValue: (m) => m.granted },
  { key: 'purchased', header: 'Bought', align: 'right', cell: (m) => groupThousands(m.purchased), sortValue: (m) => m.purchased },
  { key: 'cpu', header: 'CPU-seconds', align: 'right', cell: (m) => groupThousands(Math.round(m.cpuSeconds)), sortValue: (m) => m.cpuSeconds },
  { key: 'runs', header: 'Runs', align: 'right', cell: (m) => groupThousands(m.runs), sortValue: (m) => m.runs },
  { key: 'storage', header: 'Stored', align: 'right', cell: (m) => <FileSize bytes={m.storageBytes} />, sortValue: (m) => m.storageBytes },
];

export function UsageTab() {
  const [params, setParams] = useSearchParams();
  const months = Number(params.get('months') ?? 6) || 6;
  const selected = params.get('lab');
  const usage = useAdminUsage(months);
  const set = (k: string, v: string | null) =>
    setParams((p) => {
      const n = new URLSearchParams(p);
      if (v === null) n.delete(k);
      else n.set(k, v);
      return n;
    });
  if (usage.isPending) return <SkeletonTable rows={3} columns={8} />;
  if (usage.isError) return <ErrorPanel error={usage.error} />;
  const { labs } = usage.data;
  const lab = labs.find((l) => l.labId === selected) ?? null;
  return (
    <div className="space-y-8">
      <Section
        title="Usage and quotas"
        description={`Every lab's use by calendar month (UTC), ${usage.data.months[0]} to ${usage.data.month}. Labs over quota come first.`}
        actions={
          <>
            <SelectField label="Months" value={String(months)} onChange={(e) => set('months', e.target.value)} fieldClassName="w-28">
              {[3, 6, 12, 24].map((n) => <option key={n} value={n}>{n}</option>)}
            </SelectField>
            <a className={`${buttonClass('quiet', 'sm')} self-end no-underline`} href={usageCsvUrl(months)} download>Export CSV</a>
          </>
        }
      >
        {labs.length === 0 ? (
          <EmptyState title="No labs yet" />
        ) : (
          <div className="space-y-6">
            <SortableTable caption="lab usage" columns={labColumns((id) => set('lab', id))} rows={labs} rowKey={(l) => l.labId} initialSort={{ key: 'standing', order: 'asc' }} />
            <AllowanceChart labs={labs} />
          </div>
        )}
      </Section>
      {lab ? <LabDetail lab={lab} onClose={() => set('lab', null)} /> : <p className="text-sm text-ink-soft">Choose a lab to see its members, charts and actions.</p>}
    </div>
  );
}

function LabDetail({ lab, onClose }: { lab: LabUsage; onClose: () => void }) {
  return (
    <div className="space-y-8" data-testid="lab-detail">
      <Section
        title={lab.name}
        description={<><StandingBadge standing={lab.standing} /> <span className="ml-2">{lab.standingNote}</span></>}
        actions={<button type="button" className={buttonClass('quiet', 'sm')} onClick={onClose}>Close</button>}
      >
        {lab.suspendedAt ? (
          <div className="mb-5"><Notice tone="warning" title={`Suspended on ${formatDate(lab.suspendedAt)}`}>{lab.suspendedReason}</Notice></div>
        ) : null}
        <FactList
          items={[
            { term: 'Paid balance', value: <span data-testid="lab-available">{groupThousands(lab.available)} credits</span> },
            { term: 'Held for running jobs', value: `${groupThousands(lab.reserved)} credits` },
            { term: 'Free allowance', value: `${groupThousands(lab.freeAllowance)} credits per month${lab.allowanceIsDefault ? ' (site default)' : ' (set by an admin)'}, ${groupThousands(lab.freeLeft)} left this month` },
            { term: 'Stored', value: <FileSize bytes={lab.storageBytes} /> },
          ]}
        />
        <div className="mt-6 grid grid-cols-1 gap-8 lg:grid-cols-2">
          <CreditsByMonthChart lab={lab} />
          <BalanceChart lab={lab} />
          <ComputeByMonthChart lab={lab} />
        </div>
      </Section>
      <Section title="Members" description="Credits count against the member who submitted the run, in the month it was submitted.">
        {lab.members.length === 0 ? <EmptyState title="No members" /> : <SortableTable caption="member usage" columns={memberColumns} rows={lab.members} rowKey={(m) => m.memberId} initialSort={{ key: 'standing', order: 'asc' }} />}
      </Section>
      <Section title="By month">
        <SortableTable caption="usage by month" columns={monthColumns} rows={lab.months} rowKey={(m) => m.month} initialSort={{ key: 'month', order: 'desc' }} />
      </Section>
      <Section title="Credits" description="A grant or revocation is a ledger entry with its reason; revoking takes only credits not held by running jobs.">
        <CreditsForm key={lab.labId} lab={lab} />
      </Section>
      <div className="grid grid-cols-1 gap-8 lg:grid-cols-2">
        <Section title="Free allowance"><AllowanceForm key={`${lab.labId}-${lab.freeAllowance}`} lab={lab} /></Section>
        <Section title={lab.suspendedAt ? 'Reinstate' : 'Suspend'}><SuspensionForm key={`${lab.labId}-${lab.suspendedAt}`} lab={lab} /></Section>
      </div>
    </div>
  );
}
