import { randomUUID } from 'node:crypto';
import { creditPurchases } from '../../../drizzle/schema.js';
import { CREDIT_PACKS, type CreditAdjustmentRequest } from '../../../shared/api/credits.js';
import type { Db } from '../db/client.js';
import { conflict } from '../http/http-error.js';
import { audit } from '../services/audit.js';
import { accounts } from './accounts.js';
import { entriesOf, labBalance, lockLab, post, type Executor } from './ledger.js';

/**
 * A site admin's grant (credits from the `grants` account) or revocation (back to it), always with
 * a reason, recorded in the ledger and the audit trail together. A revocation takes only what is
 * available: credits held by running jobs cannot be taken.
 */
/**
 * Book a grant or revocation and read back its entry and the new balance in the same transaction:
 * the answer is built before the commit, so a database lost after the commit cannot turn a booked
 * adjustment into an error the admin would retry (and book twice).
 */
export async function adjustCredits(db: Db, labId: string, actorId: string, req: CreditAdjustmentRequest) {
  return db.transaction(async (tx) => {
    await lockLab(tx, labId);
    const sign = req.kind === 'grant' ? 1 : -1;
    if (req.kind === 'revocation') {
      const { available } = await labBalance(tx, labId);
      if (req.credits > available) throw conflict(`cannot revoke ${req.credits} credits: the lab has ${available} available`);
    }
    const booked = await post(tx, { labId, kind: req.kind, idempotencyKey: `${req.kind}:${randomUUID()}`, actorId, reason: req.reason, detail: { credits: req.credits } }, [
      { account: accounts.available(labId), amount: sign * req.credits },
      { account: accounts.grants, amount: -sign * req.credits },
    ]);
    await audit(tx, { actorId, labId, action: `credits.${req.kind}`, subjectType: 'lab', subjectId: labId, reason: req.reason, detail: { credits: req.credits } });
    const [entry] = (await entriesOf(tx, labId, { kinds: [req.kind], limit: 50 })).filter((e) => e.id === booked!.id);
    return { entry: entry!, balance: await labBalance(tx, labId) };
  });
}

/**
 * A paid purchase booked without the payment provider (the demo seed's invented ones): its ledger
 * entry, and when the amount is one of the packs also the purchase row, shown with its receipt.
 */
export async function bookOfflinePurchase(db: Executor, labId: string, credits: number, reference: string, actorId: string | null): Promise<void> {
  const pack = CREDIT_PACKS.find((p) => p.credits === credits);
  await db.transaction(async (tx) => {
    const now = new Date();
    const [p] = pack
      ? await tx
          .insert(creditPurchases)
          .values({ labId, buyerId: actorId, pack: pack.id, credits, amount: pack.amount, currency: pack.currency, checkoutSessionId: reference, status: 'paid', paidAt: now, receiptMailedAt: now })
          .onConflictDoNothing({ target: creditPurchases.checkoutSessionId })
          .returning({ id: creditPurchases.id })
      : [];
    const booked = await post(tx, { labId, kind: 'purchase', idempotencyKey: `purchase:${reference}`, purchaseId: p?.id ?? null, actorId, reason: 'offline purchase', detail: { reference } }, [
      { account: accounts.available(labId), amount: credits },
      { account: accounts.stripeClearing, amount: -credits },
    ]);
    // a billing event like a paid checkout: in the trail once, with the ledger entry
    if (booked) await audit(tx, { actorId, labId, action: 'credits.purchase', subjectType: p ? 'purchase' : 'lab', subjectId: p?.id ?? labId, reason: 'offline purchase', detail: { credits, reference } });
  });
}
