import { receiptNumber } from '../../../shared/api/credits.js';
import type { MailMessage } from '../mail/mailer.js';
import { htmlMail } from '../mail/layout.js';

export type ReceiptFacts = {
  to: string;
  labName: string;
  labId: string;
  purchaseId: string;
  number: number;
  credits: number;
  amount: number;
  currency: string;
  paidAt: Date;
};

/** Amounts arrive in the currency's minor unit; Intl knows each currency's decimals. */
export function formatMoney(minor: number, currency: string): string {
  const fmt = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  const digits = fmt.resolvedOptions().maximumFractionDigits ?? 2;
  return fmt.format(minor / 10 ** digits);
}

export function receiptMail(publicUrl: string, r: ReceiptFacts): MailMessage {
  const no = receiptNumber(r.number);
  const href = `${publicUrl}/lab/credits/receipts/${r.purchaseId}?labId=${r.labId}`;
  const lines = [
    `Receipt ${no}`,
    `${r.credits.toLocaleString('en-US')} compute credits for ${r.labName}, paid ${formatMoney(r.amount, r.currency)} on ${r.paidAt.toISOString().slice(0, 10)}.`,
    'The credits are in the lab\'s balance now; every member can spend them on runs within their monthly quota.',
  ];
  return {
    to: r.to,
    subject: `Receipt ${no}: ${r.credits.toLocaleString('en-US')} credits for ${r.labName}`,
    text: `${lines.join('\n\n')}\n\n${href}\n`,
    html: htmlMail(lines, { href, label: 'View the receipt' }),
  };
}
