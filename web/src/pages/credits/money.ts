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
