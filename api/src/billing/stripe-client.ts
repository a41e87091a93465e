import Stripe from 'stripe';
import type { Env } from '../../../shared/env.js';
import { badRequest } from '../http/http-error.js';

/**
 * The official SDK, pointed at STRIPE_API_BASE (shared/env.ts: the local payments fake unless set,
 * https://api.stripe.com in production): switching to Stripe changes environment variables only.
 */
export function createStripe(env: Pick<Env, 'STRIPE_SECRET_KEY' | 'STRIPE_API_BASE'>): Stripe {
  const base = env.STRIPE_API_BASE ? new URL(env.STRIPE_API_BASE) : null;
  return new Stripe(env.STRIPE_SECRET_KEY, {
    maxNetworkRetries: 1,
    telemetry: false,
    ...(base
      ? {
          host: base.hostname,
          port: base.port || (base.protocol === 'https:' ? 443 : 80),
          protocol: base.protocol === 'https:' ? 'https' : 'http',
        }
      : {}),
  });
}

/**
 * Verify a webhook's signature over the exact bytes received.
 * @throws HttpError 400 when the header is missing or the signature does not match
 */
export function verifyWebhook(stripe: Stripe, rawBody: unknown, signature: string | undefined, secret: string): Stripe.Event {
  if (!signature) throw badRequest('missing Stripe-Signature header');
  if (!Buffer.isBuffer(rawBody) || rawBody.length === 0) throw badRequest('expected the event as the raw request body');
  try {
    return stripe.webhooks.constructEvent(rawBody, signature, secret);
  } catch (err) {
    throw badRequest(`webhook signature check failed: ${(err as Error).message}`);
  }
}
