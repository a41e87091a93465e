import { z } from 'zod';
import { idSchema, isoDateSchema } from './errors.js';

/**
 * Compute credits: the HTTP contract of the lab's credits page, checkout and the admin's
 * adjustments. Prices and the allowance are constants here so the web app shows what the API charges.
 */

/** Free credits a lab gets each calendar month (UTC) unless a site admin set its own; runs draw on them before paid credits. */
export const FREE_MONTHLY_ALLOWANCE = 100;

export const CREDIT_PACKS = [
  { id: 'sheet', name: 'Sheet', credits: 1_000, amount: 2_000, currency: 'eur' },
  { id: 'ream', name: 'Ream', credits: 5_000, amount: 9_000, currency: 'eur' },
  { id: 'bale', name: 'Bale', credits: 25_000, amount: 40_000, currency: 'eur' },
] as const;
export type CreditPackId = (typeof CREDIT_PACKS)[number]['id'];

/**
 * A pack's name wherever people read it (cards, purchases, receipts, the ledger's reason): packs are
 * named like products, capitalised ("Ream"), while the id ("ream") stays in addresses and requests.
 * A purchase row holds the id; one the price list no longer has keeps its id as its name.
 */
export function packName(id: string): string {
  return CREDIT_PACKS.find((p) => p.id === id)?.name ?? id;
}
export const creditPackIdSchema = z.enum(CREDIT_PACKS.map((p) => p.id) as [CreditPackId, ...CreditPackId[]], {
  error: `pack must be one of ${CREDIT_PACKS.map((p) => p.id).join(', ')}`,
});
export const creditPackSchema = z.object({
  id: creditPackIdSchema,
  name: z.string(),
  credits: z.number().int().min(1),
  /** price in the currency's minor unit (cents) */
  amount: z.number().int().min(0),
  currency: z.string(),
});
export type CreditPack = z.infer<typeof creditPackSchema>;

/** "2026-12": usage and the free allowance are counted per calendar month in UTC. */
export const monthSchema = z.string().regex(/^\d{4}-(0[1-9]|1[0-2])$/, 'month must look like 2026-12');

export const creditBalanceSchema = z.object({
  /** paid and granted credits not held by a running job */
  available: z.number().int().min(0),
  /** held for queued and running jobs until they settle */
  reserved: z.number().int().min(0),
  month: monthSchema,
  freeAllowance: z.number().int().min(0),
  /** false when a site admin set this lab's allowance (it may then differ from FREE_MONTHLY_ALLOWANCE) */
  allowanceIsDefault: z.boolean(),
  /** what is left of this month's free allowance */
  freeLeft: z.number().int().min(0),
});
export type CreditBalance = z.infer<typeof creditBalanceSchema>;

/**
 * open: its checkout can still be paid; paid: credited (final); expired: the checkout lapsed unpaid;
 * abandoned: a manager gave it up. Neither expired nor abandoned purchases moved any credits.
 */
export const purchaseStatusSchema = z.enum(['open', 'paid', 'expired', 'abandoned']);

/** How long a checkout stays payable (Stripe allows 30 minutes to 24 hours). */
export const CHECKOUT_LIFETIME_MINUTES = 60;
export const purchaseSchema = z.object({
  id: idSchema,
  pack: z.string(),
  credits: z.number().int(),
  amount: z.number().int(),
  currency: z.string(),
  status: purchaseStatusSchema,
  /** the card's refusal on the last attempt, while still unpaid */
  lastError: z.string().nullable(),
  /** TW-000042; shown on the receipt */
  receiptNumber: z.string(),
  buyer: z.object({ id: idSchema, name: z.string(), email: z.string() }).nullable(),
  createdAt: isoDateSchema,
  /** when its checkout stops taking payment; null for purchases booked offline */
  expiresAt: isoDateSchema.nullable(),
  paidAt: isoDateSchema.nullable(),
  receiptMailedAt: isoDateSchema.nullable(),
});
export type Purchase = z.infer<typeof purchaseSchema>;

/** The caller's own standing: their monthly quota (null = no personal limit) and what they used this month. */
export const memberStandingSchema = z.object({
  monthlyQuota: z.number().int().nullable(),
  usedThisMonth: z.number().int().min(0),
});

/** GET /api/labs/:labId/credits */
export const creditsSummaryResponseSchema = z.object({
  labId: idSchema,
  balance: creditBalanceSchema,
  packs: z.array(creditPackSchema),
  purchases: z.array(purchaseSchema),
  /** null for a site admin who is not a member */
  me: memberStandingSchema.nullable(),
});
export type CreditsSummaryResponse = z.infer<typeof creditsSummaryResponseSchema>;

/** GET /api/labs/:labId/credits/purchases/:id: one purchase with its receipt */
export const purchaseResponseSchema = z.object({ purchase: purchaseSchema, labName: z.string() });
export type PurchaseResponse = z.infer<typeof purchaseResponseSchema>;
export const purchaseParamsSchema = z.strictObject({ labId: idSchema, id: idSchema });
/** POST /api/labs/:labId/credits/purchases/:id/abandon (managers): close a checkout not paid yet */
export const abandonPurchaseResponseSchema = z.object({ purchase: purchaseSchema });
export type AbandonPurchaseResponse = z.infer<typeof abandonPurchaseResponseSchema>;

/** POST /api/labs/:labId/credits/checkout (managers): where to send the buyer's browser */
export const checkoutRequestSchema = z.strictObject({ pack: creditPackIdSchema });
export type CheckoutRequest = z.infer<typeof checkoutRequestSchema>;
export const checkoutResponseSchema = z.object({ purchaseId: idSchema, url: z.url() });
export type CheckoutResponse = z.infer<typeof checkoutResponseSchema>;

/** The most credits one check answers for: far beyond a lab's means, still exact in a double. */
export const CREDIT_CHECK_MAX = 1e12;

/** POST /api/labs/:labId/credits/check: would a job of this many credits be accepted now? (the run form asks before submitting) */
export const creditCheckRequestSchema = z.strictObject({
  credits: z
    .number({ error: 'enter a whole number of credits' })
    .int('enter a whole number of credits')
    .min(0, 'must be 0 or more')
    .max(CREDIT_CHECK_MAX, `must be at most ${CREDIT_CHECK_MAX.toLocaleString('en-US')} credits; make the job smaller`),
});
export type CreditCheckRequest = z.infer<typeof creditCheckRequestSchema>;
export const creditCheckSchema = z.object({
  allowed: z.boolean(),
  credits: z.number().int().min(0),
  /** covered by this month's free allowance */
  fromAllowance: z.number().int().min(0),
  /** taken from the lab's paid credits */
  fromBalance: z.number().int().min(0),
  /** paid credits the lab lacks for this job (0 when allowed or only the quota stands in the way) */
  missingCredits: z.number().int().min(0),
  /** the member's quota left this month; null = no personal limit */
  quotaLeft: z.number().int().nullable(),
  /** credits beyond the member's quota */
  overQuota: z.number().int().min(0),
  /** one sentence for the form and the 402 answer */
  message: z.string(),
  /** the web page where a manager buys credits */
  buyPath: z.string(),
});
export type CreditCheck = z.infer<typeof creditCheckSchema>;
export const creditCheckResponseSchema = z.object({ check: creditCheckSchema });
export type CreditCheckResponse = z.infer<typeof creditCheckResponseSchema>;

export const LEDGER_ENTRY_KINDS = ['purchase', 'allowance', 'reservation', 'settlement', 'release', 'grant', 'revocation'] as const;
export const ledgerEntrySchema = z.object({
  id: idSchema,
  kind: z.enum(LEDGER_ENTRY_KINDS),
  createdAt: isoDateSchema,
  runId: idSchema.nullable(),
  memberId: idSchema.nullable(),
  reason: z.string().nullable(),
  lines: z.array(z.object({ account: z.string(), amount: z.number().int() })),
});
export type LedgerEntry = z.infer<typeof ledgerEntrySchema>;
/** GET /api/labs/:labId/credits/ledger: the newest entries first, every line shown */
export const ledgerResponseSchema = z.object({ entries: z.array(ledgerEntrySchema) });
export type LedgerResponse = z.infer<typeof ledgerResponseSchema>;

export const usageRowSchema = z.object({
  month: monthSchema,
  memberId: idSchema.nullable(),
  memberName: z.string(),
  /** credits charged for finished runs */
  charged: z.number().int().min(0),
  /** of which covered by the free allowance */
  free: z.number().int().min(0),
  /** still held for runs not yet settled */
  reserved: z.number().int().min(0),
  runs: z.number().int().min(0),
});
export type UsageRow = z.infer<typeof usageRowSchema>;
/** GET /api/labs/:labId/credits/usage (and usage.csv): one row per month and member, newest month first */
export const usageResponseSchema = z.object({ rows: z.array(usageRowSchema) });
export type UsageResponse = z.infer<typeof usageResponseSchema>;

/** POST /api/labs/:labId/credits/adjustments (site admins): a grant or a revocation, always with a reason */
export const creditAdjustmentRequestSchema = z.strictObject({
  kind: z.enum(['grant', 'revocation']),
  credits: z.number().int('credits must be a whole number').min(1, 'credits must be at least 1').max(1e9),
  reason: z.string().trim().min(3, 'give a reason of at least 3 characters').max(500),
});
export type CreditAdjustmentRequest = z.infer<typeof creditAdjustmentRequestSchema>;
export const creditAdjustmentResponseSchema = z.object({ entry: ledgerEntrySchema, balance: creditBalanceSchema });

export const receiptNumber = (n: number) => `TW-${String(n).padStart(6, '0')}`;
/** The web page of a lab's credits (the lab page's credits tab), where managers buy packs. */
export const creditsPagePath = (labId: string) => `/lab/credits?labId=${labId}`;

/** POST /api/payments/webhook answers the provider with what the event did (for its delivery log). */
export const webhookAckSchema = z.object({ received: z.literal(true), outcome: z.string() });
