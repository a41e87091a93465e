import { createHmac } from 'node:crypto';

/**
 * The `Stripe-Signature` header exactly as Stripe builds it: `t=<unix seconds>,v1=<hex HMAC-SHA256
 * of "<t>.<payload>" keyed with the endpoint secret>`. The official SDK's
 * stripe.webhooks.constructEvent verifies it (tests/infra/payments.test.ts checks that).
 */
export function signatureHeader(payload: string, secret: string, timestamp: number): string {
  const v1 = createHmac('sha256', secret).update(`${timestamp}.${payload}`, 'utf8').digest('hex');
  return `t=${timestamp},v1=${v1}`;
}
