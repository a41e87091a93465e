import { Router } from 'express';
import { webhookAckSchema } from '../../../shared/api/credits.js';
import { handlePaymentEvent, mailPendingReceipt, purchaseOfEvent } from '../billing/purchases.js';
import { createStripe, verifyWebhook } from '../billing/stripe-client.js';
import type { AppDeps } from '../deps.js';
import { respond } from '../http/respond.js';

/** Where the payment provider's events arrive; app.ts hands this path its raw body (express.raw) for the signature. */
export const PAYMENTS_WEBHOOK_PATH = '/payments/webhook';

export function paymentsRouter({ db, env, mailer, log }: AppDeps): Router {
  const r = Router();
  const stripe = createStripe(env);

  r.post(PAYMENTS_WEBHOOK_PATH, async (req, res) => {
    const event = verifyWebhook(stripe, req.body, req.get('stripe-signature'), env.STRIPE_WEBHOOK_SECRET);
    const result = await handlePaymentEvent(db, event);
    // a duplicate may be the retry of a delivery whose receipt mail failed: try the mail again
    await mailPendingReceipt({ db, mailer, env, log }, result.purchaseId ?? (await purchaseOfEvent(db, event)));
    log.info('payment event', { id: event.id, type: event.type, outcome: result.outcome });
    respond(res, 200, webhookAckSchema, { received: true, outcome: result.outcome });
  });

  return r;
}
