import { useEffect, useState } from 'react';
import { useSearchParams } from 'react-router';
import { useAbandonPurchase, useCheckout, useCredits, useCreditUsage, useLab } from '../../api/queries.js';
import { CHECKOUT_LIFETIME_MINUTES, FREE_MONTHLY_ALLOWANCE, packName, type CreditPack, type CreditsSummaryResponse, type Purchase, type UsageRow } from '../../api/contract.js';
import { useSignedIn } from '../../auth/useSignedIn.js';
import { formatDate, formatDateTime } from '../../format.js';
import {
  Button, Count, EmptyState, ErrorPanel, FormError, LinkButton, Notice, PageHeading, Section, SkeletonTable, SortableTable, type Column,
} from '../../ui/index.js';
import { allowanceText, formatMoney, recentlyPaid } from './money.js';
import { AdjustmentForm } from './AdjustmentForm.js';
import { UsageChart } from './UsageChart.js';

/**
 * Lab → credits: balance, packs (managers buy), purchase history with receipts, usage per month and
 * member as a chart and a table with a CSV export. `?labId=` picks a lab other than the active one.
 */
export function CreditsPage() {
  const me = useSignedIn();
  const [params, setParams] = useSearchParams();
  const labId = params.get('labId') ?? me.activeLabId;
  // The checkout's way back (?paid=…, ?cancelled) is said on this visit only: kept here and dropped
  // from the address, so a reload or a bookmark does not announce the purchase again.
  const [back] = useState(() => ({ paid: params.get('paid'), cancelled: params.has('cancelled') }));
  useEffect(() => {
    if (!params.has('paid') && !params.has('cancelled')) return;
    const rest = new URLSearchParams(params);
    rest.delete('paid');
    rest.delete('cancelled');
    setParams(rest, { replace: true });
  }, [params, setParams]);
  const membership = me.labs.find((l) => l.id === labId) ?? null;
  // a site admin reviewing a lab they do not belong to: its name comes from the lab itself
  const lab = useLab(membership ? null : labId);
  if (!labId) return <EmptyState title="No lab yet">Join or create a lab to buy and use compute credits.</EmptyState>;
  return (
    <LabCredits labId={labId} labName={membership?.name ?? lab.data?.lab.name ?? 'Lab'} isManager={membership?.role === 'manager'} isAdmin={me.user.isAdmin} paid={back.paid} cancelled={back.cancelled} />
  );
}

function LabCredits({ labId, labName, isManager, isAdmin, paid, cancelled }: { labId: string; labName: string; isManager: boolean; isAdmin: boolean; paid: string | null; cancelled: boolean }) {
  // back from the checkout page: poll until the webhook has credited the purchase
  const credits = useCredits(labId, Boolean(paid));
  const waiting = Boolean(paid) && !credits.data?.purchases.some(recentlyPaid);
  if (credits.isPending) return <SkeletonTable rows={3} columns={4} />;
  if (credits.isError) return <ErrorPanel error={credits.error} />;
  const data = credits.data;
  return (
    <div className="space-y-8">
      <PageHeading overline="Compute credits" title={labName} lede="Runs draw on this month's free allowance first, then on the lab's paid credits. Estimates are reserved at submission and settled from what the run used." actions={<LinkButton tone="quiet" to="/lab">Members and quotas</LinkButton>} />
      {paid ? (
        waiting ? (
          <Notice title="Payment received">Waiting for the payment provider to confirm it; the credits appear here in a moment.</Notice>
        ) : (
          <Notice tone="success" title="Credits added">The purchase is in the lab’s balance and its receipt is on its way by e-mail.</Notice>
        )
      ) : null}
      {cancelled ? <Notice tone="warning" title="Checkout cancelled">Nothing was charged.</Notice> : null}
      <BalanceSection data={data} />
      {isManager ? <PacksSection labId={labId} packs={data.packs} /> : null}
      <PurchasesSection labId={labId} purchases={data.purchases} isManager={isManager} />
      <UsageSection labId={labId} />
      {isAdmin ? <AdjustmentForm labId={labId} /> : null}
    </div>
  );
}


function Figure({ label, value, unit, note, testId }: { label: string; value: number; unit: string; note?: string; testId: string }) {
  return (
    <div>
      <p className="text-xs font-semibold uppercase tracking-[0.12em] text-ink-faint">{label}</p>
      <p className="mt-1 text-3xl font-semibold text-ink" data-testid={testId}>
        <Count n={value} showPower={false} />
      </p>
      <p className="text-sm text-ink-soft">{unit}{note ? ` · ${note}` : ''}</p>
    </div>
  );
}

function BalanceSection({ data }: { data: CreditsSummaryResponse }) {
  const b = data.balance;
  return (
    <Section title="Balance" description={<span data-testid="credits-allowance">{allowanceText(b, FREE_MONTHLY_ALLOWANCE)}</span>}>
      <div className="grid grid-cols-2 gap-8 lg:grid-cols-4">
        <Figure label="Available" value={b.available} unit="paid credits" testId="credits-available" />
        <Figure label="Reserved" value={b.reserved} unit="credits held by running jobs" testId="credits-reserved" />
        <Figure label="Free this month" value={b.freeLeft} unit={`of ${b.freeAllowance} credits left`} testId="credits-free" />
        {data.me ? (
          <Figure
            label="Your use this month"
            value={data.me.usedThisMonth}
            unit="credits"
            note={data.me.monthlyQuota === null ? 'no personal quota' : `quota ${data.me.monthlyQuota.toLocaleString('en-US')}`}
            testId="credits-mine"
          />
        ) : null}
      </div>
    </Section>
  );
}

function PacksSection({ labId, packs }: { labId: string; packs: CreditPack[] }) {
  const checkout = useCheckout(labId);
  return (
    <Section title="Buy credits" description="Paid by card on the payment provider's page; the credits arrive as soon as the payment is confirmed.">
      {checkout.isError ? (
        <div className="mb-4">
          <FormError error={checkout.error} />
        </div>
      ) : null}
      <div className="grid grid-cols-1 gap-6 md:grid-cols-3">
        {packs.map((p) => (
          <div key={p.id} className="rounded-lg border border-rule bg-paper px-5 py-4">
            <p className="text-sm font-semibold text-ink">{packName(p.id)}</p>
            <p className="mt-1 text-2xl font-semibold text-ink">
              <Count n={p.credits} unit="credits" showPower={false} />
            </p>
            <p className="text-sm text-ink-soft">
              {formatMoney(p.amount, p.currency)} · {formatMoney(Math.round((p.amount / p.credits) * 100), p.currency)} per 100 credits
            </p>
            <Button className="mt-4 w-full" busy={checkout.isPending && checkout.variables === p.id} busyLabel="Opening checkout…" onClick={() => checkout.mutate(p.id)} aria-label={`Buy ${packName(p.id)}`}>
              Buy {packName(p.id)}
            </Button>
          </div>
        ))}
      </div>
    </Section>
  );
}

const STATUS_WORDS: Record<Purchase['status'], string> = { open: 'not paid yet', paid: 'paid', expired: 'expired, not paid', abandoned: 'abandoned, not paid' };

/** Under the status: when an open checkout lapses, and that a closed one cost nothing. */
function statusNote(p: Purchase): string | null {
  if (p.status === 'open') return p.expiresAt ? `checkout open until ${formatDateTime(p.expiresAt)}` : null;
  if (p.status === 'expired') return 'the checkout lapsed; nothing was charged';
  if (p.status === 'abandoned') return 'given up; nothing was charged';
  return null;
}

/** Abandon asks once more in place, since the checkout cannot be reopened. */
function AbandonButton({ labId, purchase }: { labId: string; purchase: Purchase }) {
  const abandon = useAbandonPurchase(labId);
  const [asking, setAsking] = useState(false);
  if (!asking) {
    return (
      <Button tone="quiet" size="sm" onClick={() => setAsking(true)}>
        Abandon
      </Button>
    );
  }
  return (
    <span className="inline-flex flex-col items-end gap-1">
      <span className="text-xs text-ink-soft">Close this checkout? It can no longer be paid.</span>
      <span className="inline-flex gap-2">
        <Button tone="danger" size="sm" busy={abandon.isPending} busyLabel="Closing…" onClick={() => abandon.mutate(purchase.id)} aria-label={`Abandon the ${packName(purchase.pack)} checkout`}>
          Abandon it
        </Button>
        <Button tone="quiet" size="sm" onClick={() => setAsking(false)}>
          Keep it
        </Button>
      </span>
      {abandon.isError ? <FormError error={abandon.error} /> : null}
    </span>
  );
}

function PurchasesSection({ labId, purchases, isManager }: { labId: string; purchases: Purchase[]; isManager: boolean }) {
  // only paid purchases count: an expired or abandoned checkout bought nothing
  const paid = purchases.filter((p) => p.status === 'paid');
  const bought = paid.reduce((sum, p) => sum + p.credits, 0);
  const columns: Column<Purchase>[] = [
    { key: 'createdAt', header: 'Started', sortValue: (p) => p.createdAt, cell: (p) => formatDate(p.createdAt) },
    { key: 'receipt', header: 'Receipt', sortValue: (p) => p.receiptNumber, cell: (p) => <span className="font-mono text-xs">{p.receiptNumber}</span> },
    { key: 'pack', header: 'Pack', sortValue: (p) => packName(p.pack), cell: (p) => packName(p.pack) },
    { key: 'credits', header: 'Credits', align: 'right', sortValue: (p) => p.credits, cell: (p) => <Count n={p.credits} showPower={false} /> },
    { key: 'amount', header: 'Amount', align: 'right', sortValue: (p) => p.amount, cell: (p) => formatMoney(p.amount, p.currency) },
    {
      key: 'status',
      header: 'Status',
      sortValue: (p) => p.status,
      cell: (p) => (
        <span className={p.status === 'expired' || p.status === 'abandoned' ? 'text-ink-soft' : undefined} data-testid={`purchase-status-${p.id}`}>
          {STATUS_WORDS[p.status]}
          {statusNote(p) ? <span className="block text-xs text-ink-faint">{statusNote(p)}</span> : null}
          {p.lastError ? <span className="block text-xs text-stamp">{p.lastError}</span> : null}
        </span>
      ),
    },
    { key: 'buyer', header: 'Bought by', sortValue: (p) => p.buyer?.name ?? '', cell: (p) => p.buyer?.name ?? '—' },
    {
      key: 'view',
      header: '',
      align: 'right',
      cell: (p) =>
        p.status === 'paid' ? (
          <LinkButton tone="quiet" size="sm" to={`/lab/credits/receipts/${p.id}?labId=${labId}`}>Receipt</LinkButton>
        ) : p.status === 'open' && isManager ? (
          <AbandonButton labId={labId} purchase={p} />
        ) : null,
    },
  ];
  return (
    <Section
      title="Purchases"
      description={
        purchases.length ? (
          <span data-testid="purchases-paid">
            {paid.length === 1 ? '1 paid purchase' : `${paid.length.toLocaleString('en-US')} paid purchases`}, {bought.toLocaleString('en-US')} credits bought. Checkouts not paid within {CHECKOUT_LIFETIME_MINUTES} minutes expire.
          </span>
        ) : undefined
      }
    >
      {purchases.length === 0 ? (
        <EmptyState title="No purchases yet">Bought packs and their receipts will be listed here.</EmptyState>
      ) : (
        <SortableTable caption="purchases" columns={columns} rows={purchases} rowKey={(p) => p.id} initialSort={{ key: 'createdAt', order: 'desc' }} />
      )}
    </Section>
  );
}

function UsageSection({ labId }: { labId: string }) {
  const usage = useCreditUsage(labId);
  const columns: Column<UsageRow>[] = [
    { key: 'month', header: 'Month', sortValue: (r) => r.month, cell: (r) => <span className="font-mono text-xs">{r.month}</span> },
    { key: 'member', header: 'Member', sortValue: (r) => r.memberName.toLowerCase(), cell: (r) => r.memberName },
    { key: 'runs', header: 'Runs', align: 'right', sortValue: (r) => r.runs, cell: (r) => <Count n={r.runs} showPower={false} /> },
    { key: 'charged', header: 'Charged (credits)', align: 'right', sortValue: (r) => r.charged, cell: (r) => <Count n={r.charged} showPower={false} /> },
    { key: 'free', header: 'of which free', align: 'right', sortValue: (r) => r.free, cell: (r) => <Count n={r.free} showPower={false} /> },
    { key: 'reserved', header: 'Reserved (credits)', align: 'right', sortValue: (r) => r.reserved, cell: (r) => <Count n={r.reserved} showPower={false} /> },
  ];
  return (
    <Section
      title="Usage"
      description="Credits per month and member: charged for finished runs, held for runs still working. Failed and cancelled runs cost nothing."
      actions={<a className="text-sm" href={`/api/labs/${labId}/credits/usage.csv`} download>Download CSV</a>}
    >
      {usage.isPending ? (
        <SkeletonTable rows={3} columns={6} />
      ) : usage.isError ? (
        <ErrorPanel error={usage.error} />
      ) : usage.data.rows.length === 0 ? (
        <EmptyState title="No usage yet">Runs submitted in this lab will be counted here.</EmptyState>
      ) : (
        <div className="space-y-6">
          <UsageChart rows={usage.data.rows} />
          <SortableTable caption="usage per month and member" columns={columns} rows={usage.data.rows} rowKey={(r) => `${r.month}-${r.memberId}`} initialSort={{ key: 'month', order: 'desc' }} />
        </div>
      )}
    </Section>
  );
}
