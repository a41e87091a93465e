import { randomUUID } from 'node:crypto';
import { and, desc, eq, isNull, lte } from 'drizzle-orm';
import type Stripe from 'stripe';
import { creditPurchases, labs, paymentEvents, users } from '../../../drizzle/schema.js';
import { CHECKOUT_LIFETIME_MINUTES, CREDIT_PACKS, packName, receiptNumber, type CreditPackId, type Purchase } from '../../../shared/api/credits.js';
import type { Env } from '../../../shared/env.js';
import type { Db } from '../db/client.js';
import type { Logger } from '../logger.js';
import type { Mailer } from '../mail/mailer.js';
import { conflict, HttpError, notFound } from '../http/http-error.js';
import { audit } from '../services/audit.js';
import { accounts } from './accounts.js';
import { post, type Executor, type Tx } from './ledger.js';
import { receiptMail } from './receipt-mail.js';

type PurchaseRow = typeof creditPurchases.$inferSelect;
type Buyer = { id: string; name: string; email: string } | null;

export function purchaseView(p: PurchaseRow, buyer: Buyer): Purchase {
  return {
    id: p.id,
    pack: p.pack,
    credits: p.credits,
    amount: p.amount,
    currency: p.currency,
    status: p.status,
    lastError: p.status === 'open' ? p.lastError : null,
    receiptNumber: receiptNumber(p.receiptNumber),
    buyer,
    createdAt: p.createdAt.toISOString(),
    expiresAt: p.expiresAt?.toISOString() ?? null,
    paidAt: p.paidAt?.toISOString() ?? null,
    receiptMailedAt: p.receiptMailedAt?.toISOString() ?? null,
  };
}

export async function purchasesOf(ex: Executor, labId: string, id?: string): Promise<Purchase[]> {
  const rows = await ex
    .select({ p: creditPurchases, buyer: { id: users.id, name: users.name, email: users.email } })
    .from(creditPurchases)
    .leftJoin(users, eq(users.id, creditPurchases.buyerId))
    .where(and(eq(creditPurchases.labId, labId), id ? eq(creditPurchases.id, id) : undefined))
    .orderBy(desc(creditPurchases.createdAt))
    .limit(200);
  return rows.map((r) => purchaseView(r.p, r.buyer?.id ? r.buyer : null));
}

/**
 * Open a Checkout Session for a pack and remember it. The buyer's browser goes to the returned
 * URL (the fake's hosted page locally, Stripe's in test mode); credits arrive only by webhook.
 */
export async function startCheckout(
  deps: { db: Db; env: Env; stripe: Stripe },
  labId: string,
  buyer: { id: string; email: string },
  packId: CreditPackId,
): Promise<{ purchaseId: string; url: string }> {
  const pack = CREDIT_PACKS.find((p) => p.id === packId)!;
  const purchaseId = randomUUID();
  const back = `${deps.env.PUBLIC_URL}/lab/credits?labId=${labId}`;
  const metadata = { purchaseId, labId, pack: pack.id, credits: String(pack.credits) };
  const session = await deps.stripe.checkout.sessions
    .create({
      mode: 'payment',
      // a checkout left open is no purchase: it lapses within the hour (checkout.session.expired)
      expires_at: Math.floor(Date.now() / 1000) + CHECKOUT_LIFETIME_MINUTES * 60,
      line_items: [{ price_data: { currency: pack.currency, unit_amount: pack.amount, product_data: { name: `${packName(pack.id)}: ${pack.credits.toLocaleString('en-US')} compute credits` } }, quantity: 1 }],
      success_url: `${back}&paid={CHECKOUT_SESSION_ID}`,
      cancel_url: `${back}&cancelled=1`,
      client_reference_id: purchaseId,
      customer_email: buyer.email,
      metadata,
      payment_intent_data: { metadata },
    })
    .catch((err: unknown) => {
      // the provider down or refusing us is not the buyer's fault, and nothing was recorded yet
      throw new HttpError(502, `the payment provider did not open a checkout (${(err as Error).message}); nothing was charged, try again shortly`);
    });
  if (!session.url) throw new Error('the payment provider returned a checkout session without a URL');
  await deps.db.transaction(async (tx) => {
    await tx.insert(creditPurchases).values({
      id: purchaseId, labId, buyerId: buyer.id, pack: pack.id, credits: pack.credits, amount: pack.amount, currency: pack.currency, checkoutSessionId: session.id,
      expiresAt: new Date(session.expires_at * 1000),
    });
    await audit(tx, { actorId: buyer.id, labId, action: 'credits.checkout', subjectType: 'purchase', subjectId: purchaseId, detail: { pack: pack.id, session: session.id } });
  });
  return { purchaseId, url: session.url };
}

const providerDown = (err: unknown) =>
  new HttpError(502, `the payment provider could not be reached (${(err as Error).message}); nothing changed, try again shortly`);

/**
 * A manager gives up a checkout not paid yet: its session is closed at the provider (so it can no
 * longer be paid) and the purchase shows as abandoned. The row stays locked while the provider is
 * asked, so the checkout.session.expired event this sends, or a payment racing with it, is handled
 * after and sees the outcome. Nothing is booked; a payment that won the race is credited as usual.
 */
export async function abandonCheckout(deps: { db: Db; stripe: Stripe }, labId: string, purchaseId: string, actorId: string): Promise<Purchase> {
  await deps.db.transaction(async (tx) => {
    const p = await lockPurchase(tx, { id: purchaseId });
    if (!p || p.labId !== labId) throw notFound('purchase not found');
    if (p.status !== 'open') throw conflict(`this purchase is ${p.status}; only a checkout not paid yet can be abandoned`);
    // null: closed now; otherwise the provider refused because the session was no longer open, and says why
    const before = await deps.stripe.checkout.sessions.expire(p.checkoutSessionId).then(
      () => null,
      async (err: unknown) => {
        const s = await deps.stripe.checkout.sessions.retrieve(p.checkoutSessionId).catch(() => {
          throw providerDown(err);
        });
        if (s.status === 'open') throw providerDown(err);
        return s.status;
      },
    );
    if (before === 'complete') throw conflict('this checkout was paid meanwhile; its credits arrive as soon as the payment provider confirms the payment');
    if (before === 'expired') {
      // it had lapsed on its own before the manager gave it up (its event still on the way)
      await markExpired(tx, p, { by: 'abandon' });
      return;
    }
    await tx.update(creditPurchases).set({ status: 'abandoned', lastError: null }).where(eq(creditPurchases.id, p.id));
    await audit(tx, { actorId, labId, action: 'credits.checkout-abandoned', subjectType: 'purchase', subjectId: p.id, reason: 'given up before it was paid', detail: { pack: p.pack, session: p.checkoutSessionId } });
  });
  const [view] = await purchasesOf(deps.db, labId, purchaseId);
  return view!;
}

/**
 * Open purchases past their checkout's expiry whose expired event never reached us: the provider is
 * asked, and those it reports expired are marked so (as the event would have). Nothing is assumed:
 * a session it reports paid waits for its event, and an unreachable provider changes nothing.
 */
export async function expireLapsedCheckouts(deps: { db: Db; stripe: Stripe }, labId: string): Promise<void> {
  const lapsed = await deps.db
    .select()
    .from(creditPurchases)
    .where(and(eq(creditPurchases.labId, labId), eq(creditPurchases.status, 'open'), lte(creditPurchases.expiresAt, new Date())));
  for (const row of lapsed) {
    const session = await deps.stripe.checkout.sessions.retrieve(row.checkoutSessionId).catch(() => null);
    if (session?.status !== 'expired') continue;
    await deps.db.transaction(async (tx) => {
      const p = await lockPurchase(tx, { id: row.id });
      if (p?.status === 'open') await markExpired(tx, p, { by: 'reconciliation' });
    });
  }
}

export type EventResult = { outcome: string; purchaseId: string | null; duplicate: boolean };

async function lockPurchase(tx: Tx, where: { sessionId?: string; id?: string }) {
  const cond = where.sessionId ? eq(creditPurchases.checkoutSessionId, where.sessionId) : eq(creditPurchases.id, where.id ?? '00000000-0000-0000-0000-000000000000');
  const [row] = await tx.select().from(creditPurchases).where(cond).for('update');
  return row ?? null;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** An open purchase whose checkout lapsed: shown as expired; no credits were ever booked for it. */
async function markExpired(tx: Tx, p: PurchaseRow, detail: Record<string, string>): Promise<void> {
  await tx.update(creditPurchases).set({ status: 'expired', lastError: null }).where(eq(creditPurchases.id, p.id));
  await audit(tx, { actorId: null, labId: p.labId, action: 'credits.checkout-expired', subjectType: 'purchase', subjectId: p.id, reason: 'the checkout was not completed in time', detail: { pack: p.pack, session: p.checkoutSessionId, ...detail } });
}

/** What one event does to our purchases and the ledger; called inside the event's transaction. */
async function apply(tx: Tx, event: Stripe.Event): Promise<{ outcome: string; purchaseId: string | null }> {
  switch (event.type) {
    case 'checkout.session.completed':
    case 'checkout.session.async_payment_succeeded': {
      const s = event.data.object;
      const p = await lockPurchase(tx, { sessionId: s.id });
      if (!p) return { outcome: 'ignored: not a checkout session of ours', purchaseId: null };
      if (s.payment_status !== 'paid') return { outcome: `ignored: payment status ${s.payment_status}`, purchaseId: p.id };
      if (s.amount_total !== p.amount || s.currency !== p.currency) {
        return { outcome: `refused: paid ${s.amount_total} ${s.currency}, expected ${p.amount} ${p.currency}`, purchaseId: p.id };
      }
      // the purchase entry's key is the session, so a second "paid" event for it books nothing
      const booked = await post(
        tx,
        { labId: p.labId, kind: 'purchase', idempotencyKey: `purchase:${s.id}`, purchaseId: p.id, actorId: p.buyerId, reason: `${packName(p.pack)} pack`, detail: { session: s.id, amount: p.amount, currency: p.currency } },
        [
          { account: accounts.available(p.labId), amount: p.credits },
          { account: accounts.stripeClearing, amount: -p.credits },
        ],
      );
      // the trail records each billing event with the money it moved
      if (booked) await audit(tx, { actorId: p.buyerId, labId: p.labId, action: 'credits.purchase', subjectType: 'purchase', subjectId: p.id, reason: `${packName(p.pack)} pack`, detail: { credits: p.credits, amount: p.amount, currency: p.currency, session: s.id } });
      // paid is final: an "expired" or "declined" event arriving late never undoes it
      if (p.status !== 'paid') await tx.update(creditPurchases).set({ status: 'paid', paidAt: new Date(event.created * 1000), lastError: null }).where(eq(creditPurchases.id, p.id));
      return { outcome: booked ? `credited ${p.credits}` : 'already credited', purchaseId: p.id };
    }
    case 'checkout.session.expired': {
      const p = await lockPurchase(tx, { sessionId: event.data.object.id });
      if (!p) return { outcome: 'ignored: not a checkout session of ours', purchaseId: null };
      // an abandoned purchase stays abandoned: closing its checkout is what sent this event
      if (p.status !== 'open') return { outcome: `ignored: purchase is ${p.status}`, purchaseId: p.id };
      await markExpired(tx, p, { event: event.id });
      return { outcome: 'expired', purchaseId: p.id };
    }
    case 'payment_intent.payment_failed': {
      const intent = event.data.object;
      const id = intent.metadata?.purchaseId;
      const p = id && UUID.test(id) ? await lockPurchase(tx, { id }) : null;
      if (!p) return { outcome: 'ignored: not a payment of ours', purchaseId: null };
      if (p.status !== 'open') return { outcome: `ignored: purchase is ${p.status}`, purchaseId: p.id };
      const why = intent.last_payment_error?.message ?? 'the card was declined';
      await tx.update(creditPurchases).set({ lastError: why }).where(eq(creditPurchases.id, p.id));
      await audit(tx, { actorId: null, labId: p.labId, action: 'credits.payment-declined', subjectType: 'purchase', subjectId: p.id, reason: why, detail: { pack: p.pack, session: p.checkoutSessionId, event: event.id } });
      return { outcome: `declined: ${why}`, purchaseId: p.id };
    }
    default:
      return { outcome: `ignored: event type ${event.type}`, purchaseId: null };
  }
}

/**
 * Handle a verified event exactly once. The event id is claimed first (primary key): a replay, a
 * duplicate delivery or a retry after our own 2xx finds the claim and changes nothing; a delivery
 * racing with the first one waits on that row until the first commits. A failure rolls the claim
 * back with everything else, so the provider's retry handles the event afresh.
 */
export async function handlePaymentEvent(db: Db, event: Stripe.Event): Promise<EventResult> {
  return db.transaction(async (tx) => {
    const [claimed] = await tx.insert(paymentEvents).values({ id: event.id, type: event.type, outcome: 'received' }).onConflictDoNothing().returning({ id: paymentEvents.id });
    if (!claimed) {
      const [seen] = await tx.select().from(paymentEvents).where(eq(paymentEvents.id, event.id));
      return { outcome: `duplicate of an event handled at ${seen?.receivedAt.toISOString()}: ${seen?.outcome}`, purchaseId: null, duplicate: true };
    }
    const result = await apply(tx, event);
    await tx.update(paymentEvents).set({ outcome: result.outcome }).where(eq(paymentEvents.id, event.id));
    return { ...result, duplicate: false };
  });
}

/**
 * Mail the receipt of a paid purchase once. Claimed before sending and released if SMTP fails, so
 * the webhook answers 500, the provider retries, and the retry mails it.
 */
export async function mailPendingReceipt(deps: { db: Db; mailer: Mailer; env: Env; log: Logger }, purchaseId: string | null): Promise<boolean> {
  if (!purchaseId) return false;
  const [p] = await deps.db
    .update(creditPurchases)
    .set({ receiptMailedAt: new Date() })
    .where(and(eq(creditPurchases.id, purchaseId), eq(creditPurchases.status, 'paid'), isNull(creditPurchases.receiptMailedAt)))
    .returning();
  if (!p) return false;
  const [row] = await deps.db
    .select({ labName: labs.name, email: users.email })
    .from(labs)
    .leftJoin(users, eq(users.id, p.buyerId ?? '00000000-0000-0000-0000-000000000000'))
    .where(eq(labs.id, p.labId));
  if (!row?.email) return false;
  try {
    await deps.mailer.send(
      receiptMail(deps.env.PUBLIC_URL, { to: row.email, labName: row.labName, labId: p.labId, purchaseId: p.id, number: p.receiptNumber, credits: p.credits, amount: p.amount, currency: p.currency, paidAt: p.paidAt ?? new Date() }),
    );
    return true;
  } catch (err) {
    await deps.db.update(creditPurchases).set({ receiptMailedAt: null }).where(eq(creditPurchases.id, p.id));
    deps.log.warn('receipt mail failed; the payment provider will retry the event', { err, purchaseId: p.id });
    throw err;
  }
}

/** The purchase a (possibly duplicate) event is about, so a retry can still mail its receipt. */
export async function purchaseOfEvent(db: Db, event: Stripe.Event): Promise<string | null> {
  if (!event.type.startsWith('checkout.session.')) return null;
  const id = (event.data.object as { id?: string }).id;
  if (!id) return null;
  const [p] = await db.select({ id: creditPurchases.id }).from(creditPurchases).where(eq(creditPurchases.checkoutSessionId, id));
  return p?.id ?? null;
}
