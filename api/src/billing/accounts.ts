/**
 * Ledger account names. A lab owns three kinds of account; everything else is a counterpart that
 * only ever goes negative by as much as labs received (its sum tells how much came from there).
 */
export const accounts = {
  /** paid or granted credits a lab may spend */
  available: (labId: string) => `lab:${labId}:available`,
  /** credits held for a lab's unsettled runs */
  reserved: (labId: string) => `lab:${labId}:reserved`,
  /** a lab's free allowance of one calendar month; unused credits simply stay there when the month ends */
  free: (labId: string, month: string) => `lab:${labId}:free:${month}`,
  /** money received through the payment provider, as credits */
  stripeClearing: 'stripe:clearing',
  /** credits given or taken back by site admins */
  grants: 'grants',
  /** where monthly free allowances come from */
  allowance: 'allowance',
  /** credits consumed by finished runs */
  spent: 'spent',
} as const;

/** "2026-12" for a moment in UTC: usage and allowances are counted per calendar month. */
export function monthOf(at: Date): string {
  return at.toISOString().slice(0, 7);
}
