import { cardOutcome, type CardOutcome } from './cards.js';
import { StripeError } from './errors.js';
import { expireSession } from './expiry.js';
import { newId, nowSeconds } from './ids.js';
import type { PaymentIntent, PaymentsStore, StoredSession, StripeEvent } from './store.js';
import type { WebhookDeliverer } from './webhooks.js';

export interface PayResult {
  outcome: CardOutcome;
  /** the event emitted: checkout.session.completed when paid, payment_intent.payment_failed when declined */
  event?: StripeEvent;
}

function intentFor(stored: StoredSession): PaymentIntent {
  stored.paymentIntent ??= {
    id: newId('pi'),
    object: 'payment_intent',
    amount: stored.session.amount_total,
    currency: stored.session.currency,
    status: 'requires_payment_method',
    created: nowSeconds(),
    livemode: false,
    metadata: stored.paymentIntentMetadata,
    last_payment_error: null,
  };
  stored.session.payment_intent = stored.paymentIntent.id;
  return stored.paymentIntent;
}

/**
 * Try a card on an open session, as the buyer does on the hosted page (or a test through
 * /_fake/checkout/:id/pay). Paid: the session completes and checkout.session.completed goes out.
 * Declined: the session stays open for another try and payment_intent.payment_failed goes out.
 * An invalid number changes nothing.
 */
export function payWithCard(store: PaymentsStore, deliverer: WebhookDeliverer, stored: StoredSession, card: unknown): PayResult {
  const s = stored.session;
  if (s.status !== 'open') {
    throw new StripeError(400, `This checkout session is ${s.status}; it can no longer be paid.`, 'invalid_request_error', undefined, 'checkout_session_not_open');
  }
  if (s.expires_at <= nowSeconds()) {
    // between two sweeps: expire it now, with its event, rather than take the payment
    expireSession(store, deliverer, stored);
    throw new StripeError(400, 'This checkout session has expired.', 'invalid_request_error', undefined, 'checkout_session_expired');
  }
  const outcome = cardOutcome(card);
  if (outcome.kind === 'invalid') return { outcome };
  const intent = intentFor(stored);
  if (outcome.kind === 'declined') {
    intent.status = 'requires_payment_method';
    intent.last_payment_error = { type: 'card_error', code: 'card_declined', decline_code: outcome.declineCode, message: outcome.message };
    return { outcome, event: deliverer.emit('payment_intent.payment_failed', { ...intent }) };
  }
  intent.status = 'succeeded';
  intent.last_payment_error = null;
  s.status = 'complete';
  s.payment_status = 'paid';
  s.url = null;
  return { outcome, event: deliverer.emit('checkout.session.completed', { ...s }) };
}
