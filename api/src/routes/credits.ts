import { eq } from 'drizzle-orm';
import { Router } from 'express';
import { memberships, users } from '../../../drizzle/schema.js';
import {
  CREDIT_PACKS,
  abandonPurchaseResponseSchema,
  checkoutRequestSchema,
  checkoutResponseSchema,
  creditAdjustmentRequestSchema,
  creditAdjustmentResponseSchema,
  creditCheckRequestSchema,
  creditCheckResponseSchema,
  creditsSummaryResponseSchema,
  ledgerResponseSchema,
  purchaseParamsSchema,
  purchaseResponseSchema,
  usageResponseSchema,
} from '../../../shared/api/credits.js';
import { labParamsSchema } from '../../../shared/api/labs.js';
import { authOf, requireAdmin, requireLabAccess, requireUser } from '../auth/middleware.js';
import { adjustCredits } from '../billing/adjustments.js';
import { checkCredits, memberStanding } from '../billing/gate.js';
import { entriesOf, labBalance } from '../billing/ledger.js';
import { abandonCheckout, expireLapsedCheckouts, purchasesOf, startCheckout } from '../billing/purchases.js';
import { reconcileLab } from '../billing/settle.js';
import { createStripe } from '../billing/stripe-client.js';
import { runUsages, usageCsv, usageRows } from '../billing/usage.js';
import type { AppDeps } from '../deps.js';
import { notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';

/** A lab's compute credits: balance, packs and checkout, purchases with receipts, usage, the ledger itself. */
export function creditsRouter({ db, env }: AppDeps): Router {
  const r = Router();
  const stripe = createStripe(env);
  const labOf = (res: Parameters<typeof authOf>[0]) => (res.locals.lab as { labId: string; labName: string; role: string | null });

  async function usage(labId: string) {
    const entries = await entriesOf(db, labId, { kinds: ['reservation', 'settlement', 'release'] });
    const people = await db.select({ id: users.id, name: users.name }).from(users).innerJoin(memberships, eq(memberships.userId, users.id)).where(eq(memberships.labId, labId));
    const named = new Map(people.map((p) => [p.id, p.name]));
    // former members' names are still known from their user rows
    for (const e of entries) {
      if (e.memberId && !named.has(e.memberId)) {
        const [u] = await db.select({ name: users.name }).from(users).where(eq(users.id, e.memberId));
        if (u) named.set(e.memberId, u.name);
      }
    }
    return usageRows(runUsages(entries), named);
  }

  r.get('/labs/:labId/credits', requireUser, requireLabAccess(db, 'read'), async (_req, res) => {
    const { labId, role } = labOf(res);
    await reconcileLab(db, labId);
    await expireLapsedCheckouts({ db, stripe }, labId);
    const user = authOf(res).user;
    const standing = role ? await memberStanding(db, labId, user.id) : null;
    respond(res, 200, creditsSummaryResponseSchema, {
      labId,
      balance: await labBalance(db, labId),
      packs: [...CREDIT_PACKS],
      purchases: await purchasesOf(db, labId),
      me: standing ? { monthlyQuota: standing.monthlyQuota, usedThisMonth: standing.usedThisMonth } : null,
    });
  });

  r.get('/labs/:labId/credits/ledger', requireUser, requireLabAccess(db, 'read'), async (_req, res) => {
    const { labId } = labOf(res);
    await reconcileLab(db, labId);
    const entries = await entriesOf(db, labId, { limit: 500 });
    respond(res, 200, ledgerResponseSchema, { entries: entries.map(({ detail: _d, ...e }) => e) });
  });

  r.get('/labs/:labId/credits/usage', requireUser, requireLabAccess(db, 'read'), async (_req, res) => {
    const { labId } = labOf(res);
    await reconcileLab(db, labId);
    respond(res, 200, usageResponseSchema, { rows: await usage(labId) });
  });

  r.get('/labs/:labId/credits/usage.csv', requireUser, requireLabAccess(db, 'read'), async (_req, res) => {
    const { labId } = labOf(res);
    await reconcileLab(db, labId);
    res.type('text/csv; charset=utf-8').attachment(`credit-usage-${labId}.csv`).send(usageCsv(await usage(labId)));
  });

  r.get('/labs/:labId/credits/purchases/:id', requireUser, requireLabAccess(db, 'read'), async (req, res) => {
    const { id } = validate.params(req, purchaseParamsSchema);
    const { labId, labName } = labOf(res);
    await expireLapsedCheckouts({ db, stripe }, labId);
    const [purchase] = await purchasesOf(db, labId, id);
    if (!purchase) throw notFound('purchase not found');
    respond(res, 200, purchaseResponseSchema, { purchase, labName });
  });

  /** The run form asks this before submitting; POST /api/runs answers 402 with the same message. */
  r.post('/labs/:labId/credits/check', requireUser, requireLabAccess(db, 'member'), async (req, res) => {
    validate.params(req, labParamsSchema);
    const { credits } = validate.body(req, creditCheckRequestSchema);
    const { labId } = labOf(res);
    await reconcileLab(db, labId);
    respond(res, 200, creditCheckResponseSchema, { check: await checkCredits(db, labId, authOf(res).user.id, credits) });
  });

  r.post('/labs/:labId/credits/checkout', requireUser, requireLabAccess(db, 'manager'), async (req, res) => {
    const { pack } = validate.body(req, checkoutRequestSchema);
    const user = authOf(res).user;
    const out = await startCheckout({ db, env, stripe }, labOf(res).labId, user, pack);
    respond(res, 201, checkoutResponseSchema, out);
  });

  /** Give up a checkout not paid yet: the provider closes it, the purchase shows as abandoned. */
  r.post('/labs/:labId/credits/purchases/:id/abandon', requireUser, requireLabAccess(db, 'manager'), async (req, res) => {
    const { id } = validate.params(req, purchaseParamsSchema);
    const purchase = await abandonCheckout({ db, stripe }, labOf(res).labId, id, authOf(res).user.id);
    respond(res, 200, abandonPurchaseResponseSchema, { purchase });
  });

  r.post('/labs/:labId/credits/adjustments', requireUser, requireAdmin, requireLabAccess(db, 'read'), async (req, res) => {
    const body = validate.body(req, creditAdjustmentRequestSchema);
    const { labId } = labOf(res);
    const { entry, balance } = await adjustCredits(db, labId, authOf(res).user.id, body);
    const { detail: _d, ...view } = entry;
    respond(res, 201, creditAdjustmentResponseSchema, { entry: view, balance });
  });

  return r;
}
