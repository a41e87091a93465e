import type { Purchase } from '../../api/contract.js';

/** Prices travel in the currency's minor unit (cents); Intl knows each currency's decimals. */
export function formatMoney(minor: number, currency: string): string {
  const fmt = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  const digits = fmt.resolvedOptions().maximumFractionDigits ?? 2;
  return fmt.format(minor / 10 ** digits);
}

/** Paid in the last ten minutes: the purchase a buyer just came back from. */
export function recentlyPaid(p: Purchase): boolean {
  return p.status === 'paid' && p.paidAt !== null && Date.now() - new Date(p.paidAt).getTime() < 10 * 60_000;
}

const credits = (n: number) => `${n.toLocaleString('en-US')} ${n === 1 ? 'credit' : 'credits'}`;

/**
 * The balance's line about the free allowance. A site admin may set a lab's own allowance, so the
 * amount is this lab's; the site-wide default is named only when the lab is not on it.
 */
export function allowanceText(b: { month: string; freeAllowance: number; allowanceIsDefault: boolean }, defaultAllowance: number): string {
  const head = `Free allowance for ${b.month}: ${credits(b.freeAllowance)} a month for this lab`;
  if (b.allowanceIsDefault) return `${head}, the standard allowance of every lab.`;
  if (b.freeAllowance === defaultAllowance) return `${head}, set by a site admin to the standard amount.`;
  return `${head}, set by a site admin (the standard allowance is ${credits(defaultAllowance)}).`;
}
