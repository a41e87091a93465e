import { Link, useParams, useSearchParams } from 'react-router';
import { isAddressMissing } from '../../api/ApiError.js';
import { usePurchase } from '../../api/queries.js';
import { useSignedIn } from '../../auth/useSignedIn.js';
import { formatDateTime } from '../../format.js';
import { Button, Count, EmptyState, ErrorPanel, FactList, LinkButton, PageHeading, Section, SkeletonTable } from '../../ui/index.js';
import { packName } from '../../api/contract.js';
import { formatMoney } from './money.js';

/** A printable receipt of one paid purchase. */
export function ReceiptPage() {
  const { id = '' } = useParams();
  const [params] = useSearchParams();
  const me = useSignedIn();
  const labId = params.get('labId') ?? me.activeLabId ?? '';
  const q = usePurchase(labId, id);
  if (q.isPending) return <SkeletonTable rows={4} columns={2} />;
  if (q.isError) {
    // receipts are addressed by the purchase's id, not its number (TW-000001): a typed-in number is a 400
    if (isAddressMissing(q.error)) {
      return (
        <EmptyState title="No receipt at this address" action={<Link to={labId ? `/lab/credits?labId=${labId}` : '/lab/credits'}>Back to credits</Link>}>
          Open a receipt from the purchases on the lab's credits page; it may belong to another lab, or the link is mistyped.
        </EmptyState>
      );
    }
    return <ErrorPanel error={q.error} />;
  }
  const { purchase: p, labName } = q.data;
  return (
    <div className="space-y-8">
      <PageHeading
        overline="Receipt"
        title={p.receiptNumber}
        lede={`${labName} · ${p.status === 'paid' ? `paid ${formatDateTime(p.paidAt)}` : 'not paid'}`}
        actions={
          <>
            <LinkButton tone="quiet" to={`/lab/credits?labId=${labId}`}>Back to credits</LinkButton>
            <Button tone="quiet" onClick={() => window.print()}>Print</Button>
          </>
        }
      />
      <Section>
        <FactList
          items={[
            { term: 'Receipt', value: <span className="font-mono">{p.receiptNumber}</span> },
            { term: 'Lab', value: labName },
            { term: 'Pack', value: packName(p.pack) },
            { term: 'Credits', value: <Count n={p.credits} unit="credits" showPower={false} /> },
            { term: 'Amount', value: formatMoney(p.amount, p.currency) },
            { term: 'Bought by', value: p.buyer ? `${p.buyer.name} <${p.buyer.email}>` : '—' },
            { term: 'Started', value: formatDateTime(p.createdAt) },
            { term: 'Paid', value: formatDateTime(p.paidAt) },
            { term: 'Receipt mailed', value: formatDateTime(p.receiptMailedAt) },
          ]}
        />
      </Section>
    </div>
  );
}
