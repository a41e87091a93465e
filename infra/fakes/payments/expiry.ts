import { nowSeconds } from './ids.js';
import type { PaymentsStore, StoredSession } from './store.js';
import type { WebhookDeliverer } from './webhooks.js';

/** How often the fake looks for sessions past their expires_at (Stripe expires them on its own, too). */
export const EXPIRY_SWEEP_MS = 1000;

/** Close an open session as expired and send checkout.session.expired, as Stripe does at expires_at or on /expire. */
export function expireSession(store: PaymentsStore, deliverer: WebhookDeliverer, stored: StoredSession): void {
  stored.session.status = 'expired';
  stored.session.url = null;
  store.save();
  deliverer.emit('checkout.session.expired', { ...stored.session });
}

/** Expire every open session whose expires_at has passed; returns how many. */
export function expireLapsedSessions(store: PaymentsStore, deliverer: WebhookDeliverer, now = nowSeconds()): number {
  const lapsed = Object.values(store.state.sessions).filter((s) => s.session.status === 'open' && s.session.expires_at <= now);
  for (const s of lapsed) expireSession(store, deliverer, s);
  return lapsed.length;
}
