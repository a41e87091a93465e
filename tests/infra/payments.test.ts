import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { luhnValid } from '../../infra/fakes/payments/cards.js';
import { startPaymentsFake, type PaymentsFake } from '../../infra/fakes/payments.js';

/**
 * The payments fake driven by the official stripe SDK (an outside, general-purpose library): the
 * SDK must accept its answers, and the SDK's own stripe.webhooks.constructEvent must verify every
 * webhook the fake signs. A fresh fake on an ephemeral port per file, with a real HTTP endpoint
 * receiving the webhooks.
 */

interface Received {
  body: string;
  signature: string;
}

let fake: PaymentsFake;
let stripe: Stripe;
let receiver: http.Server;
let receiverUrl: string;
let dir: string;
const received: Received[] = [];
/** how many of the next webhook requests the receiver answers with 500 */
let failNext = 0;
let secret: string;

async function until<T>(what: string, get: () => T | undefined | Promise<T | undefined>, timeoutMs = 10_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await get();
    if (v !== undefined) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

const eventsOf = (type: string, objectId?: string) =>
  received
    .map((r) => ({ r, e: JSON.parse(r.body) as Stripe.Event }))
    .filter(({ e }) => e.type === type && (!objectId || (e.data.object as { id: string }).id === objectId));

/** Events the fake emitted (whether or not an endpoint of this file subscribed to them). */
const expiredEventsOf = (sessionId: string) => fake.store.state.events.filter((e) => e.type === 'checkout.session.expired' && (e.data.object as { id: string }).id === sessionId);

function newSession(extra: Partial<Stripe.Checkout.SessionCreateParams> = {}) {
  return stripe.checkout.sessions.create({
    mode: 'payment',
    line_items: [
      { price_data: { currency: 'eur', unit_amount: 1250, product_data: { name: '500 compute credits' } }, quantity: 2 },
      { price_data: { currency: 'eur', unit_amount: 300, product_data: { name: 'Print proof' } }, quantity: 1 },
    ],
    success_url: 'http://127.0.0.1:5180/lab/credits?paid={CHECKOUT_SESSION_ID}',
    cancel_url: 'http://127.0.0.1:5180/lab/credits?cancelled=1',
    client_reference_id: 'lab_fictional_42',
    metadata: { labId: 'lab_fictional_42', credits: '1000' },
    ...extra,
  });
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-payments-'));
  receiver = http.createServer((req, res) => {
    let body = '';
    req.setEncoding('utf8');
    req.on('data', (c: string) => (body += c));
    req.on('end', () => {
      received.push({ body, signature: String(req.headers['stripe-signature'] ?? '') });
      if (failNext > 0) {
        failNext--;
        res.writeHead(500).end('try again');
      } else res.writeHead(200).end('{}');
    });
  });
  await new Promise<void>((r) => receiver.listen(0, '127.0.0.1', () => r()));
  receiverUrl = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/api/payments/webhook`;
  fake = await startPaymentsFake({ port: 0, dir, retry: { baseDelayMs: 50, maxAttempts: 4 } });
  stripe = new Stripe('sk_test_toppleworks_tests', { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0, telemetry: false });
  const endpoint = await stripe.webhookEndpoints.create({
    url: receiverUrl,
    enabled_events: ['checkout.session.completed', 'payment_intent.payment_failed'],
  });
  secret = endpoint.secret!;
});

afterAll(async () => {
  await fake?.close();
  await new Promise<void>((r) => receiver?.close(() => r()));
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('payments fake, driven by the stripe SDK', () => {
  it('registers a webhook endpoint with a whsec_ secret', async () => {
    // Stripe's documented shape: the secret is returned only by create (Stripe API reference, webhook endpoints)
    expect(secret).toMatch(/^whsec_/);
    const listed = await stripe.webhookEndpoints.list();
    expect(listed.data.map((e) => e.url)).toContain(receiverUrl);
    expect(listed.data.every((e) => e.secret === undefined)).toBe(true);
  });

  it('creates a checkout session the SDK parses, with totals from the line items', async () => {
    const session = await newSession();
    expect(session.object).toBe('checkout.session');
    expect(session.id).toMatch(/^cs_test_/);
    // 2 x 1250 + 1 x 300 minor units
    expect(session.amount_total).toBe(2800);
    expect(session.currency).toBe('eur');
    expect(session.status).toBe('open');
    expect(session.payment_status).toBe('unpaid');
    expect(session.metadata).toEqual({ labId: 'lab_fictional_42', credits: '1000' });
    expect(session.client_reference_id).toBe('lab_fictional_42');
    expect(session.url).toBe(`${fake.url}/checkout/${session.id}`);

    const again = await stripe.checkout.sessions.retrieve(session.id, { expand: ['line_items'] });
    expect(again.id).toBe(session.id);
    expect(again.line_items?.data.map((li) => [li.description, li.quantity, li.amount_total])).toEqual([
      ['500 compute credits', 2, 2500],
      ['Print proof', 1, 300],
    ]);
  });

  it('shows a hosted checkout page with the amount, the items, a card field, Pay and Cancel', async () => {
    const session = await newSession();
    const res = await fetch(session.url!);
    expect(res.status).toBe(200);
    const html = await res.text();
    // Intl.NumberFormat('en-US', { currency: 'EUR' }) writes 28.00 euros as €28.00 (ECMA-402)
    expect(html).toContain('€28.00');
    expect(html).toContain('500 compute credits');
    expect(html).toContain('name="card"');
    expect(html).toMatch(/<button[^>]*>Pay /);
    expect(html).toMatch(/<button[^>]*>Cancel</);
  });

  it('pays with 4242 4242 4242 4242 through the page: redirect to success_url and a signed checkout.session.completed', async () => {
    const session = await newSession();
    const res = await fetch(`${fake.url}/checkout/${session.id}/pay`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: 'card=4242+4242+4242+4242',
      redirect: 'manual',
    });
    expect(res.status).toBe(303);
    // Stripe replaces the literal {CHECKOUT_SESSION_ID} in success_url (Stripe Checkout docs)
    expect(res.headers.get('location')).toBe(`http://127.0.0.1:5180/lab/credits?paid=${session.id}`);

    const [{ r }] = await until('the completed event', () => {
      const found = eventsOf('checkout.session.completed', session.id);
      return found.length ? found : undefined;
    });
    const event = stripe.webhooks.constructEvent(r.body, r.signature, secret);
    expect(event.type).toBe('checkout.session.completed');
    const paid = event.data.object as Stripe.Checkout.Session;
    expect(paid.id).toBe(session.id);
    expect(paid.payment_status).toBe('paid');
    expect(paid.metadata).toEqual({ labId: 'lab_fictional_42', credits: '1000' });
    expect(paid.payment_intent).toMatch(/^pi_/);

    const after = await stripe.checkout.sessions.retrieve(session.id);
    expect(after.status).toBe('complete');
    expect(after.url).toBeNull();
  });

  it('declines 4000 0000 0000 0002, keeps the session open for a retry, and sends payment_intent.payment_failed', async () => {
    const session = await newSession({ payment_intent_data: { metadata: { labId: 'lab_fictional_42' } } });
    const page = await fetch(`${fake.url}/checkout/${session.id}/pay`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: 'card=4000000000000002',
      redirect: 'manual',
    });
    // 402 Payment Required, with the decline shown on the page and the form still there
    expect(page.status).toBe(402);
    const html = await page.text();
    expect(html).toContain('Your card was declined.');
    expect(html).toContain('name="card"');

    const open = await stripe.checkout.sessions.retrieve(session.id);
    expect(open.status).toBe('open');
    expect(open.payment_intent).toMatch(/^pi_/);
    const failed = await until('the failed event', () => eventsOf('payment_intent.payment_failed', open.payment_intent as string)[0]);
    const event = stripe.webhooks.constructEvent(failed.r.body, failed.r.signature, secret);
    const intent = event.data.object as Stripe.PaymentIntent;
    expect(intent.last_payment_error?.code).toBe('card_declined');
    expect(intent.last_payment_error?.decline_code).toBe('generic_decline');
    expect(intent.metadata).toEqual({ labId: 'lab_fictional_42' });

    // the buyer retries with a good card through the test helper; the same payment intent succeeds
    const retry = await fetch(`${fake.url}/_fake/checkout/${session.id}/pay`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ card: '4242424242424242' }),
    });
    expect(retry.status).toBe(200);
    const done = (await retry.json()) as { outcome: string; session: Stripe.Checkout.Session };
    expect(done.outcome).toBe('paid');
    expect(done.session.payment_intent).toBe(intent.id);
  });

  it('retries with backoff when the endpoint answers 500, and both attempts carry valid signatures', async () => {
    const session = await newSession();
    failNext = 1;
    const before = received.length;
    await fetch(`${fake.url}/_fake/checkout/${session.id}/pay`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ card: '4242 4242 4242 4242' }),
    });
    const attempts = await until('two attempts', () => {
      const mine = received.slice(before).filter((r) => (JSON.parse(r.body) as Stripe.Event).type === 'checkout.session.completed');
      return mine.length >= 2 ? mine : undefined;
    });
    const [first, second] = attempts.map((a) => stripe.webhooks.constructEvent(a.body, a.signature, secret));
    expect(first!.id).toBe(second!.id);
    const log = (await (await fetch(`${fake.url}/_fake/events`)).json()) as {
      events: { id: string; deliveries: { state: string; attempts: { status?: number }[] }[] }[];
    };
    const entry = log.events.find((e) => e.id === first!.id)!;
    expect(entry.deliveries).toHaveLength(1);
    expect(entry.deliveries[0]!.state).toBe('delivered');
    expect(entry.deliveries[0]!.attempts.map((a) => a.status)).toEqual([500, 200]);
  });

  it('retries when the endpoint is unreachable and gives up after maxAttempts', async () => {
    const closed = http.createServer();
    await new Promise<void>((r) => closed.listen(0, '127.0.0.1', () => r()));
    const deadUrl = `http://127.0.0.1:${(closed.address() as AddressInfo).port}/gone`;
    await new Promise<void>((r) => closed.close(() => r()));
    const dead = await stripe.webhookEndpoints.create({ url: deadUrl, enabled_events: ['checkout.session.completed'] });
    try {
      const session = await newSession();
      const paid = (await (
        await fetch(`${fake.url}/_fake/checkout/${session.id}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"card":"4242424242424242"}' })
      ).json()) as { event: string };
      const delivery = await until('the dead endpoint to be given up', async () => {
        const log = (await (await fetch(`${fake.url}/_fake/events`)).json()) as {
          events: { id: string; deliveries: { url: string; state: string; attempts: { error?: string }[] }[] }[];
        };
        const d = log.events.find((e) => e.id === paid.event)?.deliveries.find((x) => x.url === deadUrl);
        return d?.state === 'failed' ? d : undefined;
      });
      // maxAttempts 4 with 50, 100, 200 ms between them
      expect(delivery.attempts).toHaveLength(4);
      expect(delivery.attempts.every((a) => a.error === 'ECONNREFUSED')).toBe(true);
    } finally {
      await stripe.webhookEndpoints.del(dead.id);
    }
  });

  it('redelivers an event on request, with a fresh valid signature and the same event id', async () => {
    const completed = eventsOf('checkout.session.completed');
    const original = JSON.parse(completed[0]!.r.body) as Stripe.Event;
    const before = received.length;
    const res = await fetch(`${fake.url}/_fake/events/${original.id}/redeliver`, { method: 'POST' });
    expect(res.status).toBe(200);
    const again = await until('the redelivery', () => received.slice(before).find((r) => (JSON.parse(r.body) as Stripe.Event).id === original.id));
    expect(stripe.webhooks.constructEvent(again.body, again.signature, secret).id).toBe(original.id);
  });

  it('gives every event its own evt_ id', async () => {
    const ids = received.map((r) => (JSON.parse(r.body) as Stripe.Event).id);
    const unique = new Set(ids);
    // redeliveries and retries repeat an id; distinct events never share one
    const events = (await stripe.events.list()).data;
    expect(new Set(events.map((e) => e.id)).size).toBe(events.length);
    expect([...unique].every((id) => /^evt_/.test(id))).toBe(true);
  });

  it('rejects a tampered payload or a wrong secret (the SDK throws a signature error)', () => {
    const { r } = eventsOf('checkout.session.completed')[0]!;
    expect(() => stripe.webhooks.constructEvent(r.body.replace('"paid"', '"unpaid"'), r.signature, secret)).toThrow(/signature/i);
    expect(() => stripe.webhooks.constructEvent(r.body, r.signature, 'whsec_wrong')).toThrow(/signature/i);
  });

  it('signs events for an endpoint configured at start (FAKE_WEBHOOK_URL + STRIPE_WEBHOOK_SECRET)', async () => {
    const got: Received[] = [];
    const sink = http.createServer((req, res) => {
      let body = '';
      req.on('data', (c: Buffer) => (body += c.toString()));
      req.on('end', () => {
        got.push({ body, signature: String(req.headers['stripe-signature']) });
        res.end();
      });
    });
    await new Promise<void>((r) => sink.listen(0, '127.0.0.1', () => r()));
    const configured = await startPaymentsFake({
      port: 0,
      webhook: { url: `http://127.0.0.1:${(sink.address() as AddressInfo).port}/hook`, secret: 'whsec_toppleworks_local' },
    });
    try {
      const s2 = new Stripe('sk_test_x', { host: '127.0.0.1', port: configured.port, protocol: 'http', maxNetworkRetries: 0, telemetry: false });
      const session = await s2.checkout.sessions.create({
        mode: 'payment',
        line_items: [{ price_data: { currency: 'usd', unit_amount: 900, product_data: { name: 'Poster print' } }, quantity: 1 }],
        success_url: 'http://127.0.0.1:5180/ok',
      });
      await fetch(`${configured.url}/_fake/checkout/${session.id}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"card":"4242424242424242"}' });
      const hit = await until('the configured endpoint', () => got[0]);
      expect(s2.webhooks.constructEvent(hit.body, hit.signature, 'whsec_toppleworks_local').type).toBe('checkout.session.completed');
    } finally {
      await configured.close();
      await new Promise<void>((r) => sink.close(() => r()));
    }
  });

  it('cancel on the page redirects to cancel_url and charges nothing', async () => {
    const session = await newSession();
    const res = await fetch(`${fake.url}/checkout/${session.id}/cancel`, { method: 'POST', redirect: 'manual' });
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe('http://127.0.0.1:5180/lab/credits?cancelled=1');
    const after = await stripe.checkout.sessions.retrieve(session.id);
    expect(after.status).toBe('open');
    expect(after.payment_status).toBe('unpaid');
  });

  it('answers a repeated Idempotency-Key with the first result instead of creating a second session', async () => {
    // Stripe API reference, idempotent requests: same key, same response
    const params: Stripe.Checkout.SessionCreateParams = {
      mode: 'payment',
      line_items: [{ price_data: { currency: 'eur', unit_amount: 700, product_data: { name: 'Proof print' } }, quantity: 1 }],
      success_url: 'http://127.0.0.1:5180/ok',
    };
    const a = await stripe.checkout.sessions.create(params, { idempotencyKey: 'order-fictional-7' });
    const b = await stripe.checkout.sessions.create(params, { idempotencyKey: 'order-fictional-7' });
    const c = await stripe.checkout.sessions.create(params, { idempotencyKey: 'order-fictional-8' });
    expect(b.id).toBe(a.id);
    expect(c.id).not.toBe(a.id);
  });

  it('keeps sessions across a restart of the fake (state in its folder)', async () => {
    const session = await newSession();
    const second = await startPaymentsFake({ port: 0, dir });
    try {
      const s2 = new Stripe('sk_test_x', { host: '127.0.0.1', port: second.port, protocol: 'http', maxNetworkRetries: 0, telemetry: false });
      expect((await s2.checkout.sessions.retrieve(session.id)).amount_total).toBe(2800);
    } finally {
      await second.close();
    }
  });
});

describe('payments fake, bad input', () => {
  it('answers a missing parameter with a Stripe invalid_request_error naming it', async () => {
    const err = await stripe.checkout.sessions
      .create({ mode: 'payment', success_url: 'http://127.0.0.1:5180/ok' } as Stripe.Checkout.SessionCreateParams)
      .catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((err as Stripe.errors.StripeError).statusCode).toBe(400);
    expect((err as Stripe.errors.StripeError).param).toBe('line_items');
  });

  it('rejects an unknown parameter and a non-numeric amount, creating nothing', async () => {
    const before = (await stripe.checkout.sessions.list({ limit: 100 })).data.length;
    const unknown = await newSession({ colour: 'red' } as Partial<Stripe.Checkout.SessionCreateParams>).catch((e: unknown) => e);
    expect((unknown as Stripe.errors.StripeError).message).toMatch(/unknown parameter: colour/);
    const bad = await stripe.checkout.sessions
      .create({
        mode: 'payment',
        line_items: [{ price_data: { currency: 'eur', unit_amount: 'lots' as unknown as number, product_data: { name: 'x' } }, quantity: 1 }],
        success_url: 'http://127.0.0.1:5180/ok',
      })
      .catch((e: unknown) => e);
    expect((bad as Stripe.errors.StripeError).param).toBe('line_items[0][price_data][unit_amount]');
    expect((await stripe.checkout.sessions.list({ limit: 100 })).data.length).toBe(before);
  });

  it('answers an unknown session id with resource_missing', async () => {
    const err = await stripe.checkout.sessions.retrieve('cs_test_nope').catch((e: unknown) => e);
    expect((err as Stripe.errors.StripeError).statusCode).toBe(404);
    expect((err as Stripe.errors.StripeError).code).toBe('resource_missing');
  });

  it('answers unknown routes with a Stripe-shaped 404 and calls without a key with 401', async () => {
    const res = await fetch(`${fake.url}/v1/charges/ch_1`, { headers: { authorization: 'Bearer sk_test_x' } });
    expect(res.status).toBe(404);
    expect(await res.json()).toEqual({ error: { type: 'invalid_request_error', message: 'Unrecognized request URL (GET: /v1/charges/ch_1).' } });
    const anon = await fetch(`${fake.url}/v1/checkout/sessions`, { method: 'POST' });
    expect(anon.status).toBe(401);
    expect(((await anon.json()) as { error: { type: string } }).error.type).toBe('invalid_request_error');
  });

  it('refuses a card number with a bad check digit and changes nothing', async () => {
    // Luhn check digit, ISO/IEC 7812-1: 4242 4242 4242 4242 passes, ...4241 does not
    expect(luhnValid('4242424242424242')).toBe(true);
    expect(luhnValid('4242424242424241')).toBe(false);
    const session = await newSession();
    const res = await fetch(`${fake.url}/_fake/checkout/${session.id}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"card":"4242424242424241"}' });
    expect(res.status).toBe(400);
    expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/not valid/);
    const after = await stripe.checkout.sessions.retrieve(session.id);
    expect(after.status).toBe('open');
    expect(after.payment_intent).toBeNull();
  });

  it('expires a session at its expires_at on its own, sending checkout.session.expired, and then refuses to take payment', async () => {
    const session = await newSession({ expires_at: Math.floor(Date.now() / 1000) + 1 });
    expect(session.status).toBe('open');
    const e = await until('checkout.session.expired', () => expiredEventsOf(session.id)[0], 5000);
    expect(e.data.object).toMatchObject({ id: session.id, status: 'expired', url: null });
    expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('expired');
    const pay = await fetch(`${fake.url}/_fake/checkout/${session.id}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"card":"4242424242424242"}' });
    expect(pay.status).toBe(400);
    expect(fake.store.state.events.filter((x) => x.type === 'checkout.session.completed' && (x.data.object as { id: string }).id === session.id)).toEqual([]);
  });

  it('expires a session at once on request (stripe.checkout.sessions.expire), once', async () => {
    const session = await newSession();
    expect((await stripe.checkout.sessions.expire(session.id)).status).toBe('expired');
    expect(expiredEventsOf(session.id)).toHaveLength(1);
    await expect(stripe.checkout.sessions.expire(session.id)).rejects.toThrow(/Only open checkout sessions can be expired/);
    expect(expiredEventsOf(session.id)).toHaveLength(1);
  });

  it('refuses to pay a session twice', async () => {
    const session = await newSession();
    const pay = () => fetch(`${fake.url}/_fake/checkout/${session.id}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"card":"4242424242424242"}' });
    expect((await pay()).status).toBe(200);
    const second = await pay();
    expect(second.status).toBe(400);
    expect(((await second.json()) as { error: { message: string } }).error.message).toMatch(/complete/);
  });
});
