import http, { type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { randomInt } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, creditPurchases, ledgerEntries, ledgerLines, paymentEvents } from '../../drizzle/schema.js';
import {
  CHECKOUT_LIFETIME_MINUTES,
  CREDIT_CHECK_MAX,
  abandonPurchaseResponseSchema,
  FREE_MONTHLY_ALLOWANCE,
  checkoutResponseSchema,
  creditCheckResponseSchema,
  creditsSummaryResponseSchema,
  ledgerResponseSchema,
  usageResponseSchema,
  type CreditsSummaryResponse,
} from '../../shared/api/credits.js';
import { runResponseSchema, type Run } from '../../shared/api/runs.js';
import { estimateRun } from '../../shared/estimate.js';
import { runSpecSchema, type RunSpecInput } from '../../shared/run-spec.js';
import { QUEUE_NAMES } from '../../shared/jobs.js';
import { writeNpy } from '../../renderer/src/npy/index.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { releaseRun } from '../../api/src/billing/settle.js';
import { createStripe } from '../../api/src/billing/stripe-client.js';
import { createApp } from '../../api/src/app.js';
import { createSmtpMailer } from '../../api/src/mail/mailer.js';
import supertest from 'supertest';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { waitForMail } from './support/outbox.js';

/**
 * Compute credits against the real services: the payments fake (checkout sessions, its card rules
 * and signed webhook deliveries with retries), PostgreSQL, Redis, the SMTP fake and the real farm
 * worker. Every event reaches the API through a small forwarding proxy that can refuse deliveries,
 * so the fake's retries are exercised for real.
 */

let h: Harness;
let stripe: Stripe;
let endpointId: string;
let webhookSecret: string;
let apiServer: Server;
let proxy: Server;
/** how many of the next deliveries the proxy answers 503 instead of forwarding */
let failNext = 0;
const people = {} as Record<'manager' | 'author' | 'author2' | 'admin', { id: string; email: string; name: string }>;
const sessions = {} as Record<keyof typeof people, Session>;
let labId: string;

const fakeUrl = () => process.env.PAYMENTS_FAKE_URL ?? process.env.STRIPE_API_BASE ?? 'http://127.0.0.1:14570';
const listen = (s: Server) => new Promise<number>((resolve) => s.listen(0, '127.0.0.1', () => resolve((s.address() as AddressInfo).port)));

beforeAll(async () => {
  // The API's port must be known before the endpoint is registered, and the endpoint's secret before the app is built.
  apiServer = http.createServer();
  const apiPort = await listen(apiServer);
  proxy = http.createServer(async (req, res) => {
    const chunks: Buffer[] = [];
    for await (const c of req) chunks.push(c as Buffer);
    if (failNext > 0) {
      failNext--;
      res.writeHead(503).end('try again later');
      return;
    }
    const headers = Object.fromEntries(Object.entries(req.headers).filter(([k]) => ['content-type', 'stripe-signature'].includes(k))) as Record<string, string>;
    const answer = await fetch(`http://127.0.0.1:${apiPort}${req.url}`, { method: 'POST', headers, body: Buffer.concat(chunks) });
    res.writeHead(answer.status, { 'content-type': answer.headers.get('content-type') ?? 'text/plain' }).end(Buffer.from(await answer.arrayBuffer()));
  });
  const proxyPort = await listen(proxy);
  const base = { STRIPE_SECRET_KEY: process.env.STRIPE_SECRET_KEY ?? 'sk_test_toppleworks_local', STRIPE_API_BASE: fakeUrl() };
  stripe = createStripe(base);
  const endpoint = await stripe.webhookEndpoints.create({
    url: `http://127.0.0.1:${proxyPort}/api/payments/webhook`,
    enabled_events: ['checkout.session.completed', 'checkout.session.expired', 'payment_intent.payment_failed'],
  });
  endpointId = endpoint.id;
  webhookSecret = endpoint.secret!;
  process.env.STRIPE_WEBHOOK_SECRET = webhookSecret;
  process.env.STRIPE_API_BASE = base.STRIPE_API_BASE;
  h = await startHarness('credits');
  apiServer.on('request', h.app);

  people.manager = await createUser(h, 'Credit Manager');
  people.author = await createUser(h, 'Credit Author');
  people.author2 = await createUser(h, 'Credit Second Author');
  people.admin = await createUser(h, 'Credit Admin', { isAdmin: true });
  labId = await createLab(h, 'Credit Lab', [
    { userId: people.manager.id, role: 'manager' },
    { userId: people.author.id, role: 'author' },
    { userId: people.author2.id, role: 'author' },
  ]);
  for (const k of Object.keys(people) as (keyof typeof people)[]) sessions[k] = await signIn(h, people[k].email, TEST_PASSWORD);
});

afterAll(async () => {
  await stripe?.webhookEndpoints.del(endpointId).catch(() => {});
  proxy?.closeAllConnections();
  apiServer?.closeAllConnections();
  await Promise.all([proxy, apiServer].map((s) => new Promise((r) => s?.close(r))));
  await h?.close();
});

async function summary(lab = labId, who: Session = sessions.manager): Promise<CreditsSummaryResponse> {
  const res = await as(h.http.get(`/api/labs/${lab}/credits`), who);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return creditsSummaryResponseSchema.parse(res.body);
}

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 10_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

async function checkout(lab = labId, pack: 'sheet' | 'ream' | 'bale' = 'sheet') {
  const res = await as(h.http.post(`/api/labs/${lab}/credits/checkout`), sessions.manager).send({ pack });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const out = checkoutResponseSchema.parse(res.body);
  const [row] = await h.deps.db.select().from(creditPurchases).where(eq(creditPurchases.id, out.purchaseId));
  return { ...out, sessionId: row!.checkoutSessionId };
}

/** Pay an open session without a browser, through the fake's test helper (same card rules as its page). */
async function payWith(sessionId: string, card: string) {
  const res = await fetch(`${fakeUrl()}/_fake/checkout/${sessionId}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ card }) });
  return { status: res.status, body: (await res.json()) as { outcome: string; event?: string } };
}

type FakeEvent = { id: string; type: string; data: { object: { id: string } }; deliveries: { url: string; state: string; attempts: { status?: number }[] }[] };
async function fakeEvents(): Promise<FakeEvent[]> {
  return ((await (await fetch(`${fakeUrl()}/_fake/events`)).json()) as { events: FakeEvent[] }).events;
}
const proxyPort = () => (proxy.address() as AddressInfo).port;
const ourDeliveries = (e: FakeEvent) => e.deliveries.filter((d) => d.url.includes(`:${proxyPort()}/`));

/** Post an event to the webhook as the provider would, signed with `secret` (the SDK's own test signer). */
function postEvent(event: object, secret = webhookSecret) {
  const payload = JSON.stringify(event, null, 2);
  const header = stripe.webhooks.generateTestHeaderString({ payload, secret });
  return h.http.post('/api/payments/webhook').set('Content-Type', 'application/json').set('Stripe-Signature', header).send(payload);
}
const eventOf = (type: string, object: object, id = `evt_test_${randomInt(1e9)}`) => ({ id, object: 'event', api_version: '2026-10-28.endive', created: Math.floor(Date.now() / 1000), type, data: { object }, livemode: false });

/** Sum of every line of every entry of a lab: double entry means zero. */
async function labLinesSum(lab: string): Promise<number> {
  const [r] = await h.deps.db
    .select({ total: sql<string>`coalesce(sum(${ledgerLines.amount}), 0)` })
    .from(ledgerLines)
    .innerJoin(ledgerEntries, eq(ledgerEntries.id, ledgerLines.entryId))
    .where(eq(ledgerEntries.labId, lab));
  return Number(r!.total);
}

/** A square-lattice run priced at exactly `credits` by the estimator (found by bisection on n). */
function specCosting(credits: number): RunSpecInput {
  const spec = (n: number) => ({ lattice: { preset: 'square' as const }, chips: n });
  const cost = (n: number) => estimateRun(runSpecSchema.parse(spec(n))).credits;
  let lo = 1, hi = 1e9;
  while (hi - lo > 1) {
    const mid = Math.floor((lo + hi) / 2);
    if (cost(mid) < credits) lo = mid;
    else hi = mid;
  }
  expect(cost(hi)).toBe(credits);
  return spec(hi);
}

const submit = (who: Session, spec: RunSpecInput, lab = labId) => as(h.http.post('/api/runs'), who).send({ labId: lab, title: `credits ${randomInt(1e6)}`, spec });

async function freshLab(name: string, grant = 0): Promise<string> {
  const id = await createLab(h, name, [
    { userId: people.manager.id, role: 'manager' },
    { userId: people.author.id, role: 'author' },
    { userId: people.author2.id, role: 'author' },
  ]);
  if (grant > 0) await as(h.http.post(`/api/labs/${id}/credits/adjustments`), sessions.admin).send({ kind: 'grant', credits: grant, reason: 'test fixture' }).expect(201);
  return id;
}

describe('buying credits through the payments fake', () => {
  it('credits the lab once the test card 4242 4242 4242 4242 pays, and mails a receipt', async () => {
    const before = await summary();
    const { url, sessionId, purchaseId } = await checkout();
    expect(url).toBe(`${fakeUrl()}/checkout/${sessionId}`);
    // Stripe's documented success card (docs.stripe.com/testing)
    expect((await payWith(sessionId, '4242 4242 4242 4242')).body.outcome).toBe('paid');
    const after = await until('the purchase to be credited', async () => {
      const s = await summary();
      return s.balance.available === before.balance.available + 1000 && s;
    });
    const p = after.purchases.find((x) => x.id === purchaseId)!;
    expect(p).toMatchObject({ status: 'paid', credits: 1000, amount: 2000, currency: 'eur', lastError: null });
    const mail = await waitForMail(h.env, people.manager.email, /^Receipt TW-\d{6}: 1,000 credits/);
    expect(mail.text).toContain('€20.00');
    expect(mail.text).toContain(p.receiptNumber);
    expect(await labLinesSum(labId)).toBe(0);
    // the ledger names the pack as its card does ("Sheet"), not by its id ("sheet pack")
    const { entries } = ledgerResponseSchema.parse((await as(h.http.get(`/api/labs/${labId}/credits/ledger`), sessions.manager).expect(200)).body);
    const card = (await summary()).packs.find((x) => x.id === 'sheet')!;
    expect(entries.filter((e) => e.kind === 'purchase').map((e) => e.reason)).toContain(`${card.name} pack`);
  });

  it('shows the declined test card 4000 0000 0000 0002 as declined and credits nothing', async () => {
    const before = await summary();
    const { sessionId, purchaseId } = await checkout();
    // Stripe's documented generic-decline card (docs.stripe.com/testing)
    const paid = await payWith(sessionId, '4000 0000 0000 0002');
    expect(paid.status).toBe(402);
    expect(paid.body.outcome).toBe('declined');
    const s = await until('the decline to be recorded', async () => {
      const x = await summary();
      return x.purchases.some((p) => p.id === purchaseId && p.lastError) ? x : null;
    });
    expect(s.purchases.find((p) => p.id === purchaseId)).toMatchObject({ status: 'open', lastError: expect.stringMatching(/declined/i) });
    expect(s.balance.available).toBe(before.balance.available);
  });

  it('refuses a webhook with a bad or missing signature (400) and credits nothing', async () => {
    const before = await summary();
    const { sessionId } = await checkout();
    const session = await stripe.checkout.sessions.retrieve(sessionId);
    const forged = eventOf('checkout.session.completed', { ...session, status: 'complete', payment_status: 'paid' });
    const wrong = await postEvent(forged, 'whsec_not_the_secret');
    expect(wrong.status).toBe(400);
    expect(wrong.body.error).toMatch(/signature/);
    const none = await h.http.post('/api/payments/webhook').set('Content-Type', 'application/json').send(JSON.stringify(forged));
    expect(none.status).toBe(400);
    expect(none.body.error).toMatch(/Stripe-Signature/);
    // a correct signature over other bytes than those sent is refused too
    const header = stripe.webhooks.generateTestHeaderString({ payload: JSON.stringify(forged), secret: webhookSecret });
    const tampered = await h.http.post('/api/payments/webhook').set('Content-Type', 'application/json').set('Stripe-Signature', header).send(JSON.stringify({ ...forged, id: 'evt_other' }));
    expect(tampered.status).toBe(400);
    expect((await summary()).balance.available).toBe(before.balance.available);
  });

  it('credits a replayed or duplicated event once', async () => {
    const before = await summary();
    const { sessionId } = await checkout();
    const { body } = await payWith(sessionId, '4242424242424242');
    await until('the first delivery', async () => (await summary()).balance.available === before.balance.available + 1000);
    // the fake delivers the same event again (a replay, as from Stripe's dashboard)
    await fetch(`${fakeUrl()}/_fake/events/${body.event}/redeliver`, { method: 'POST' });
    const event = await stripe.events.retrieve(body.event!);
    const dup = await postEvent(event);
    expect(dup.status).toBe(200);
    expect(dup.body.outcome).toMatch(/^duplicate/);
    await until('the redelivery to be answered', async () => {
      const e = (await fakeEvents()).find((x) => x.id === body.event);
      return e && ourDeliveries(e).filter((d) => d.state === 'delivered').length >= 2;
    });
    expect((await summary()).balance.available).toBe(before.balance.available + 1000);
    const [n] = await h.deps.db.select({ n: sql<number>`count(*)::int` }).from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${sessionId}`));
    expect(n!.n).toBe(1);
  });

  it('keeps a paid purchase paid when older events arrive after it (out of order)', async () => {
    const before = await summary();
    const { sessionId, purchaseId } = await checkout();
    const session = await stripe.checkout.sessions.retrieve(sessionId);
    const completed = eventOf('checkout.session.completed', { ...session, status: 'complete', payment_status: 'paid' });
    const declined = eventOf('payment_intent.payment_failed', {
      id: 'pi_test_late', object: 'payment_intent', metadata: { purchaseId }, last_payment_error: { message: 'Your card was declined.' },
    });
    const expired = eventOf('checkout.session.expired', { ...session, status: 'expired' });
    expect((await postEvent(completed)).body.outcome).toBe('credited 1000');
    expect((await postEvent(declined)).body.outcome).toBe('ignored: purchase is paid');
    expect((await postEvent(expired)).body.outcome).toBe('ignored: purchase is paid');
    const s = await summary();
    expect(s.purchases.find((p) => p.id === purchaseId)).toMatchObject({ status: 'paid', lastError: null });
    expect(s.balance.available).toBe(before.balance.available + 1000);

    // the other way round: a late "completed" after "expired" still credits, since the money was taken
    const second = await checkout();
    const s2 = await stripe.checkout.sessions.retrieve(second.sessionId);
    expect((await postEvent(eventOf('checkout.session.expired', { ...s2, status: 'expired' }))).body.outcome).toBe('expired');
    expect((await postEvent(eventOf('checkout.session.completed', { ...s2, status: 'complete', payment_status: 'paid' }))).body.outcome).toBe('credited 1000');
    expect((await summary()).balance.available).toBe(before.balance.available + 2000);
  });

  it('is credited after the fake retries a delivery our endpoint failed', async () => {
    const before = await summary();
    const { sessionId } = await checkout();
    failNext = 2;
    const { body } = await payWith(sessionId, '4242 4242 4242 4242');
    const delivery = await until('the third attempt to be delivered', async () => {
      const event = (await fakeEvents()).find((e) => e.id === body.event);
      return event && ourDeliveries(event).find((d) => d.state === 'delivered');
    }, 15_000);
    expect((await summary()).balance.available).toBe(before.balance.available + 1000);
    expect(delivery!.attempts.map((a) => a.status)).toEqual([503, 503, 200]);
    expect(delivery!.state).toBe('delivered');
  });

  it('answers 500 when the receipt cannot be mailed, and the retried delivery mails it without crediting twice', async () => {
    const before = await summary();
    const { sessionId, purchaseId } = await checkout();
    const session = await stripe.checkout.sessions.retrieve(sessionId);
    const event = eventOf('checkout.session.completed', { ...session, status: 'complete', payment_status: 'paid' });
    // the same API with its SMTP server unreachable (a port nothing listens on)
    const noMail = createApp({ ...h.deps, mailer: createSmtpMailer('smtp://127.0.0.1:9', h.env.MAIL_FROM) }, { distDir: '/nonexistent' });
    const payload = JSON.stringify(event, null, 2);
    const first = await supertest(noMail).post('/api/payments/webhook').set('Content-Type', 'application/json')
      .set('Stripe-Signature', stripe.webhooks.generateTestHeaderString({ payload, secret: webhookSecret })).send(payload);
    expect(first.status).toBe(500);
    const mid = await summary();
    expect(mid.balance.available).toBe(before.balance.available + 1000);
    expect(mid.purchases.find((p) => p.id === purchaseId)!.receiptMailedAt).toBeNull();
    // the provider's retry of the same event reaches the healthy API
    const retry = await postEvent(event);
    expect(retry.status).toBe(200);
    expect(retry.body.outcome).toMatch(/^duplicate/);
    const p = (await summary()).purchases.find((x) => x.id === purchaseId)!;
    expect(p.receiptMailedAt).not.toBeNull();
    await waitForMail(h.env, people.manager.email, new RegExp(`^Receipt ${p.receiptNumber}:`));
    expect((await summary()).balance.available).toBe(before.balance.available + 1000);
  });

  it('answers 502 and records nothing when the payment provider cannot be reached', async () => {
    const { startCheckout } = await import('../../api/src/billing/purchases.js');
    // a port nothing listens on: the SDK gets a connection error
    const down = createStripe({ STRIPE_SECRET_KEY: 'sk_test_x', STRIPE_API_BASE: 'http://127.0.0.1:9' });
    const before = await h.deps.db.select({ n: sql<number>`count(*)::int` }).from(creditPurchases);
    await expect(startCheckout({ db: h.deps.db, env: h.env, stripe: down }, labId, people.manager, 'sheet')).rejects.toMatchObject({ status: 502 });
    const after = await h.deps.db.select({ n: sql<number>`count(*)::int` }).from(creditPurchases);
    expect(after[0]!.n).toBe(before[0]!.n);
  });

  it('lets only managers start a checkout, and names the packs', async () => {
    const res = await as(h.http.post(`/api/labs/${labId}/credits/checkout`), sessions.author).send({ pack: 'sheet' });
    expect(res.status).toBe(403);
    const bad = await as(h.http.post(`/api/labs/${labId}/credits/checkout`), sessions.manager).send({ pack: 'crate' });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/pack must be one of sheet, ream, bale/);
  });
});

describe('checkouts never paid', () => {
  const entriesOf = async (lab: string) => (await h.deps.db.select({ n: sql<number>`count(*)::int` }).from(ledgerEntries).where(eq(ledgerEntries.labId, lab)))[0]!.n;

  it('opens each checkout for an hour and says until when', async () => {
    const lab = await freshLab(`Checkout Hour ${h.tag}`);
    const { purchaseId, sessionId } = await checkout(lab);
    const session = await stripe.checkout.sessions.retrieve(sessionId);
    const p = (await summary(lab)).purchases.find((x) => x.id === purchaseId)!;
    expect(p.status).toBe('open');
    expect(new Date(p.expiresAt!).getTime()).toBe(session.expires_at * 1000);
    expect(session.expires_at - session.created).toBeGreaterThanOrEqual(CHECKOUT_LIFETIME_MINUTES * 60 - 5);
    expect(session.expires_at - session.created).toBeLessThanOrEqual(CHECKOUT_LIFETIME_MINUTES * 60 + 5);
  });

  it('lets a manager abandon one: the provider closes it, it shows abandoned, counts nowhere and books nothing', async () => {
    const lab = await freshLab(`Abandon ${h.tag}`, 300);
    const before = await summary(lab);
    const entries = await entriesOf(lab);
    const { purchaseId, sessionId } = await checkout(lab);
    expect((await as(h.http.post(`/api/labs/${lab}/credits/purchases/${purchaseId}/abandon`), sessions.author)).status).toBe(403);

    const res = await as(h.http.post(`/api/labs/${lab}/credits/purchases/${purchaseId}/abandon`), sessions.manager);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(abandonPurchaseResponseSchema.parse(res.body).purchase).toMatchObject({ id: purchaseId, status: 'abandoned', paidAt: null });
    // closed at the provider: it can no longer be paid, and the event it sent changes nothing here
    expect((await stripe.checkout.sessions.retrieve(sessionId)).status).toBe('expired');
    expect((await payWith(sessionId, '4242 4242 4242 4242')).status).toBe(400);
    const expiredEvent = await until('the expired event to be handled', async () => {
      const e = (await fakeEvents()).find((x) => x.type === 'checkout.session.expired' && x.data.object.id === sessionId);
      const [row] = e ? await h.deps.db.select().from(paymentEvents).where(eq(paymentEvents.id, e.id)) : [];
      return row;
    });
    expect(expiredEvent.outcome).toBe('ignored: purchase is abandoned');

    const after = await summary(lab);
    expect(after.purchases.find((p) => p.id === purchaseId)).toMatchObject({ status: 'abandoned' });
    expect(after.balance).toEqual(before.balance);
    expect(await entriesOf(lab)).toBe(entries);
    const trail = await h.deps.db.select().from(auditEvents).where(and(eq(auditEvents.subjectId, purchaseId), eq(auditEvents.action, 'credits.checkout-abandoned')));
    expect(trail.map((e) => e.actorId)).toEqual([people.manager.id]);

    const again = await as(h.http.post(`/api/labs/${lab}/credits/purchases/${purchaseId}/abandon`), sessions.manager);
    expect(again.status).toBe(409);
    expect(again.body.error).toBe('this purchase is abandoned; only a checkout not paid yet can be abandoned');
    expect((await as(h.http.post(`/api/labs/${labId}/credits/purchases/${purchaseId}/abandon`), sessions.manager)).status).toBe(404);

    // had the money been taken all the same, the provider's "completed" still credits it, once
    const session = await stripe.checkout.sessions.retrieve(sessionId);
    const completed = eventOf('checkout.session.completed', { ...session, status: 'complete', payment_status: 'paid' });
    expect((await postEvent(completed)).body.outcome).toBe('credited 1000');
    expect((await postEvent(eventOf('checkout.session.completed', { ...session, status: 'complete', payment_status: 'paid' }))).body.outcome).toBe('already credited');
    expect((await summary(lab)).balance.available).toBe(before.balance.available + 1000);
    expect(await labLinesSum(lab)).toBe(0);
  });

  it('refuses to abandon a checkout paid meanwhile, and changes nothing', async () => {
    const lab = await freshLab(`Paid Meanwhile ${h.tag}`);
    const { purchaseId, sessionId } = await checkout(lab);
    failNext = 1000; // the "completed" event has not reached us yet
    try {
      expect((await payWith(sessionId, '4242 4242 4242 4242')).status).toBe(200);
      const res = await as(h.http.post(`/api/labs/${lab}/credits/purchases/${purchaseId}/abandon`), sessions.manager);
      expect(res.status).toBe(409);
      expect(res.body.error).toMatch(/paid meanwhile; its credits arrive as soon as the payment provider confirms the payment/);
      expect((await summary(lab)).purchases.find((p) => p.id === purchaseId)!.status).toBe('open');
    } finally {
      failNext = 0;
    }
    await until('the purchase to be credited', async () => (await summary(lab)).purchases.find((p) => p.id === purchaseId && p.status === 'paid'), 15_000);
    expect((await summary(lab)).balance.available).toBe(1000);
  });

  it('shows a checkout the provider let lapse as expired even when its event was lost, and only then', async () => {
    const lab = await freshLab(`Lapsed ${h.tag}`);
    const entries = await entriesOf(lab);
    const lapsed = await checkout(lab);
    const stillOpen = await checkout(lab);
    failNext = 1000; // every delivery of the expired event fails
    try {
      await stripe.checkout.sessions.expire(lapsed.sessionId);
      await until('a failed delivery', async () => (await fakeEvents()).find((e) => e.type === 'checkout.session.expired' && e.data.object.id === lapsed.sessionId && ourDeliveries(e).some((d) => d.attempts.length > 0)));
      // both past their expiry as far as our rows know; only the provider says which one lapsed
      await h.deps.db.update(creditPurchases).set({ expiresAt: new Date(Date.now() - 60_000) }).where(eq(creditPurchases.labId, lab));
      const s = await summary(lab);
      expect(s.purchases.find((p) => p.id === lapsed.purchaseId)!.status).toBe('expired');
      expect(s.purchases.find((p) => p.id === stillOpen.purchaseId)!.status).toBe('open');
    } finally {
      failNext = 0;
    }
    const trail = await h.deps.db.select().from(auditEvents).where(and(eq(auditEvents.subjectId, lapsed.purchaseId), eq(auditEvents.action, 'credits.checkout-expired')));
    expect(trail).toHaveLength(1);
    expect(await entriesOf(lab)).toBe(entries);
    expect((await summary(lab)).balance.available).toBe(0);
  });
});

describe('gating submissions', () => {
  it('covers small runs from the free allowance, then answers 402 with what is missing and where to buy', async () => {
    const lab = await freshLab('Gate Lab');
    const spec = specCosting(30);
    for (let k = 0; k < 3; k++) expect((await submit(sessions.author, spec, lab)).status).toBe(201);
    const s = await summary(lab);
    expect(s.balance).toMatchObject({ available: 0, reserved: 90, freeLeft: FREE_MONTHLY_ALLOWANCE - 90 });
    const check = creditCheckResponseSchema.parse((await as(h.http.post(`/api/labs/${lab}/credits/check`), sessions.author).send({ credits: 30 }).expect(200)).body).check;
    expect(check).toMatchObject({ allowed: false, fromAllowance: 10, fromBalance: 20, missingCredits: 20 });
    const refused = await submit(sessions.author, spec, lab);
    expect(refused.status).toBe(402);
    expect(refused.body.error).toBe(check.message);
    expect(refused.body.error).toContain('20 credits are missing; a lab manager can buy more on the lab\'s credits page');
    // the address is the check's buyPath (the form links it in words), not part of the sentence
    expect(refused.body.error).not.toContain('/lab/credits');
    expect(check.buyPath).toBe(`/lab/credits?labId=${lab}`);
    expect(refused.body.issues).toEqual([{ path: 'credits', message: `20 credits missing; buy at /lab/credits?labId=${lab}` }]);
    // nothing of the refused run remains
    expect((await summary(lab)).balance.reserved).toBe(90);
  });

  it('refuses to check a cost beyond its bounds with a message that says so', async () => {
    const lab = await freshLab('Bounds Lab');
    // the run form once sent the cost of n = 10^12 (over 10^12 credits) and got zod's bare "Too big"
    const res = await as(h.http.post(`/api/labs/${lab}/credits/check`), sessions.author).send({ credits: CREDIT_CHECK_MAX + 1 });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([{ path: 'credits', message: 'must be at most 1,000,000,000,000 credits; make the job smaller' }]);
    expect(res.body.error).toBe('invalid request body: credits: must be at most 1,000,000,000,000 credits; make the job smaller');
    const fraction = await as(h.http.post(`/api/labs/${lab}/credits/check`), sessions.author).send({ credits: 1.5 });
    expect(fraction.body.issues).toEqual([{ path: 'credits', message: 'enter a whole number of credits' }]);
    await as(h.http.post(`/api/labs/${lab}/credits/check`), sessions.author).send({ credits: CREDIT_CHECK_MAX }).expect(200);
  });

  it('never lets parallel submissions overdraw the lab: exactly as many as the credits cover get in', async () => {
    const lab = await freshLab('Race Lab', 20);
    const spec = specCosting(30);
    // 100 free + 20 paid = 120 credits = 4 runs of 30; twelve race for them
    const answers = await Promise.all(Array.from({ length: 12 }, () => submit(sessions.author, spec, lab)));
    const codes = answers.map((a) => a.status).sort();
    expect(codes.filter((c) => c === 201)).toHaveLength(4);
    expect(codes.filter((c) => c === 402)).toHaveLength(8);
    const s = await summary(lab);
    expect(s.balance).toMatchObject({ available: 0, reserved: 120, freeLeft: 0 });
    expect(await labLinesSum(lab)).toBe(0);
  });

  it('enforces a member\'s monthly quota at submission', async () => {
    const lab = await freshLab('Quota Lab', 1000);
    await as(h.http.put(`/api/labs/${lab}/members/${people.author2.id}/quota`), sessions.manager).send({ monthlyQuota: 40 }).expect(200);
    expect((await submit(sessions.author2, specCosting(30), lab)).status).toBe(201);
    const over = await submit(sessions.author2, specCosting(30), lab);
    expect(over.status).toBe(402);
    expect(over.body.error).toContain('only 10 credits of your monthly quota of 40 are left (20 over)');
    expect(over.body.issues).toEqual([{ path: 'quota', message: '20 credits over your monthly quota' }]);
    // the other author has no personal limit
    expect((await submit(sessions.author, specCosting(30), lab)).status).toBe(201);
    const me = (await summary(lab, sessions.author2)).me;
    expect(me).toEqual({ monthlyQuota: 40, usedThisMonth: 30 });
  });

  it('says one credit in the singular, where it is missing and where it is what the quota has left', async () => {
    // 100 free + 19 paid: after three runs of 30, a fourth needs 10 free and 20 paid, one more than the lab has
    const lab = await freshLab('Singular Lab', 19);
    for (let k = 0; k < 3; k++) expect((await submit(sessions.author, specCosting(30), lab)).status).toBe(201);
    const short = await submit(sessions.author, specCosting(30), lab);
    expect(short.status).toBe(402);
    expect(short.body.error).toBe("this job needs 30 credits: 10 from this month's free allowance and 20 paid, but the lab has 19 available, so 1 credit is missing; a lab manager can buy more on the lab's credits page");
    // a quota with one credit left
    const quotaLab = await freshLab('Singular Quota Lab', 1000);
    await as(h.http.put(`/api/labs/${quotaLab}/members/${people.author2.id}/quota`), sessions.manager).send({ monthlyQuota: 31 }).expect(200);
    expect((await submit(sessions.author2, specCosting(30), quotaLab)).status).toBe(201);
    const over = await submit(sessions.author2, specCosting(30), quotaLab);
    expect(over.status).toBe(402);
    expect(over.body.error).toBe('this job needs 30 credits but only 1 credit of your monthly quota of 31 is left (29 over); ask a lab manager to raise it');
  });

  it("tells a manager that they themselves can buy credits and raise their quota, not to find a manager", async () => {
    const lab = await freshLab('Manager Short Lab', 19);
    for (let k = 0; k < 3; k++) expect((await submit(sessions.manager, specCosting(30), lab)).status).toBe(201);
    const short = await submit(sessions.manager, specCosting(30), lab);
    expect(short.status).toBe(402);
    expect(short.body.error).toMatch(/1 credit is missing; you can buy more on the lab's credits page$/);
    const quotaLab = await freshLab('Manager Quota Lab', 1000);
    await as(h.http.put(`/api/labs/${quotaLab}/members/${people.manager.id}/quota`), sessions.manager).send({ monthlyQuota: 31 }).expect(200);
    expect((await submit(sessions.manager, specCosting(30), quotaLab)).status).toBe(201);
    const over = await submit(sessions.manager, specCosting(30), quotaLab);
    expect(over.status).toBe(402);
    expect(over.body.error).toMatch(/\(29 over\); you can raise it under Members on the lab page$/);
  });

  it('gates a series as a whole', async () => {
    const lab = await freshLab('Series Lab');
    // four grain counts that together cost more than the free allowance, each on its own less
    const costOf = (n: number) => estimateRun(runSpecSchema.parse({ lattice: { preset: 'square' }, chips: n })).credits;
    let base = 1_000_000;
    const counts = () => [base, Math.round(base * 1.1), Math.round(base * 1.2), Math.round(base * 1.3)];
    while (counts().reduce((sum, n) => sum + costOf(n), 0) <= FREE_MONTHLY_ALLOWANCE) base *= 2;
    expect(costOf(base)).toBeLessThanOrEqual(FREE_MONTHLY_ALLOWANCE);
    const res = await as(h.http.post('/api/series'), sessions.author).send({ labId: lab, title: 'too big', spec: { lattice: { preset: 'square' } }, chips: counts() });
    expect(res.status).toBe(402);
    expect((await summary(lab)).balance.reserved).toBe(0);
  });

  // no worker runs yet in this file: the job waits, so the cancel finds the run queued
  it('releases a cancelled run\'s reservation', async () => {
    const lab = await freshLab('Cancel Lab', 100);
    const res = await submit(sessions.author, specCosting(150), lab);
    expect(res.status).toBe(201);
    expect((await summary(lab)).balance).toMatchObject({ available: 50, reserved: 150, freeLeft: 0 });
    await as(h.http.post(`/api/runs/${res.body.run.id}/cancel`), sessions.author).expect(200);
    expect((await summary(lab)).balance).toMatchObject({ available: 100, reserved: 0, freeLeft: FREE_MONTHLY_ALLOWANCE });
  });
});

// a shared 2-core machine: the worker may wait for the CPU
describe('settling with the farm worker', { timeout: 90_000 }, () => {
  let farm: Awaited<ReturnType<typeof startFarmWorker>>;
  beforeAll(async () => {
    // the gating tests above queued big runs nobody means to compute: drop their jobs first
    const redis = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
    for (const name of Object.values(QUEUE_NAMES)) {
      const q = new Queue(name, { connection: redis, prefix: h.queuePrefix });
      await q.obliterate({ force: true });
      await q.close();
    }
    await redis.quit();
    farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
  });
  afterAll(async () => {
    await farm?.close();
  });

  async function ended(id: string): Promise<Run> {
    let last = '';
    return until(`run ${id} to end (last seen: ${last})`, async () => {
      const { run } = runResponseSchema.parse((await as(h.http.get(`/api/runs/${id}`), sessions.author).expect(200)).body);
      last = `${run.status} ${run.stage ?? ''}`;
      return ['finished', 'failed', 'cancelled'].includes(run.status) && run;
    }, 80_000).catch((err: Error) => {
      throw new Error(`${err.message}; last seen ${last}`);
    });
  }

  it('charges a finished run what it used and returns the rest of the reservation', async () => {
    const lab = await freshLab('Settle Lab');
    const res = await submit(sessions.author, { lattice: { preset: 'square' }, chips: 1000 }, lab);
    expect(res.status).toBe(201);
    const reserved = (await summary(lab)).balance.reserved;
    expect(reserved).toBe(2);
    const run = await ended(res.body.run.id);
    expect(run.status).toBe('finished');
    const s = await summary(lab);
    expect(s.balance.reserved).toBe(0);
    // a second of CPU and a few kB stored: one started minute, one started GiB (shared/estimate.ts creditsFor), capped at the reservation
    const { entries } = ledgerResponseSchema.parse((await as(h.http.get(`/api/labs/${lab}/credits/ledger`), sessions.author).expect(200)).body);
    const settlement = entries.find((e) => e.kind === 'settlement' && e.runId === run.id)!;
    expect(settlement.lines.find((l) => l.account === 'spent')!.amount).toBe(2);
    expect(s.balance.freeLeft).toBe(FREE_MONTHLY_ALLOWANCE - 2);
    const usage = usageResponseSchema.parse((await as(h.http.get(`/api/labs/${lab}/credits/usage`), sessions.manager).expect(200)).body);
    expect(usage.rows).toEqual([{ month: s.balance.month, memberId: people.author.id, memberName: 'Credit Author', charged: 2, free: 2, reserved: 0, runs: 1 }]);
    const csv = await as(h.http.get(`/api/labs/${lab}/credits/usage.csv`), sessions.manager).expect(200);
    expect(csv.headers['content-type']).toMatch(/^text\/csv/);
    expect(csv.text).toBe(`month,member_id,member,runs,charged_credits,of_which_free,reserved_credits\r\n${s.balance.month},${people.author.id},Credit Author,1,2,2,0\r\n`);
  });

  it('charges nothing for a run the farm could not finish (its uploaded background vanished from the store)', async () => {
    const lab = await freshLab('Refund Lab', 50);
    // random heights, so the upload is new to the store on every run of this test
    const heights = Int32Array.from({ length: 9 }, () => randomInt(3));
    const up = await as(h.http.post(`/api/uploads/background?labId=${lab}`), sessions.author).set('Content-Type', 'application/octet-stream').send(Buffer.from(writeNpy([3, 3], heights))).expect(201);
    await h.deps.blobs.delete(`uploads/${up.body.upload.sha256}.npy`);
    const before = await summary(lab);
    const res = await submit(sessions.author, { lattice: { preset: 'square' }, chips: 100, background: { kind: 'array', sha256: up.body.upload.sha256, shape: [3, 3] } }, lab);
    expect(res.status).toBe(201);
    const run = await ended(res.body.run.id);
    expect(run.status).toBe('failed');
    expect(run.error).toMatch(/not in the store/);
    const after = await summary(lab);
    expect(after.balance).toEqual(before.balance);
    const { entries } = ledgerResponseSchema.parse((await as(h.http.get(`/api/labs/${lab}/credits/ledger`), sessions.author).expect(200)).body);
    expect(entries.filter((e) => e.runId === run.id).map((e) => e.kind).sort()).toEqual(['release', 'reservation']);
    // releasing again (the worker and the API both may) books nothing more
    expect(await releaseRun(h.deps.db, run.id, 'again')).toBe('already closed');
    expect(await labLinesSum(lab)).toBe(0);
  });

});

/** PostgreSQL's own refusal, which drizzle wraps in a 'Failed query' error with the original as its cause. */
const refusedWith = (re: RegExp) => (e: unknown) => re.test(String((e as { cause?: { message?: string } }).cause?.message ?? (e as Error).message));

describe('the ledger itself', () => {
  it('is append-only and refuses unbalanced entries, in the database', async () => {
    const lab = await freshLab('Append Lab', 10);
    const mine = sql`(select id from ledger_entries where lab_id = ${lab})`;
    await expect(h.deps.db.execute(sql`update ledger_lines set amount = amount + 1 where entry_id in ${mine}`)).rejects.toSatisfy(refusedWith(/append-only/));
    await expect(h.deps.db.execute(sql`delete from ledger_lines where entry_id in ${mine}`)).rejects.toSatisfy(refusedWith(/append-only/));
    await expect(h.deps.db.execute(sql`delete from ledger_entries where lab_id = ${lab}`)).rejects.toSatisfy(refusedWith(/append-only/));
    expect((await summary(lab)).balance.available).toBe(10);
    const unbalanced = h.deps.db.transaction(async (tx) => {
      const [e] = await tx.insert(ledgerEntries).values({ labId, kind: 'grant', idempotencyKey: `bad-${randomInt(1e9)}` }).returning();
      await tx.insert(ledgerLines).values([{ entryId: e!.id, account: `lab:${labId}:available`, amount: 5 }, { entryId: e!.id, account: 'grants', amount: -4 }]);
    });
    await expect(unbalanced).rejects.toSatisfy(refusedWith(/is not balanced: 2 lines summing to 1/));
    const overdraw = h.deps.db.transaction(async (tx) => {
      const [e] = await tx.insert(ledgerEntries).values({ labId, kind: 'revocation', idempotencyKey: `bad-${randomInt(1e9)}` }).returning();
      await tx.insert(ledgerLines).values([{ entryId: e!.id, account: `lab:${labId}:available`, amount: -1e9 }, { entryId: e!.id, account: 'grants', amount: 1e9 }]);
    });
    await expect(overdraw).rejects.toSatisfy(refusedWith(/would go negative/));
  });

  it('takes admin grants and revocations with a reason, never beyond what is available', async () => {
    const lab = await freshLab('Grant Lab');
    const grant = await as(h.http.post(`/api/labs/${lab}/credits/adjustments`), sessions.admin).send({ kind: 'grant', credits: 300, reason: 'pilot project' });
    expect(grant.status).toBe(201);
    expect(grant.body.entry.lines).toEqual([{ account: `lab:${lab}:available`, amount: 300 }, { account: 'grants', amount: -300 }]);
    const tooMuch = await as(h.http.post(`/api/labs/${lab}/credits/adjustments`), sessions.admin).send({ kind: 'revocation', credits: 301, reason: 'over' });
    expect(tooMuch.status).toBe(409);
    const noReason = await as(h.http.post(`/api/labs/${lab}/credits/adjustments`), sessions.admin).send({ kind: 'revocation', credits: 1, reason: '' });
    expect(noReason.status).toBe(400);
    const back = await as(h.http.post(`/api/labs/${lab}/credits/adjustments`), sessions.admin).send({ kind: 'revocation', credits: 100, reason: 'pilot ended early' });
    expect(back.status).toBe(201);
    expect(back.body.balance.available).toBe(200);
    const byManager = await as(h.http.post(`/api/labs/${lab}/credits/adjustments`), sessions.manager).send({ kind: 'grant', credits: 5, reason: 'myself' });
    expect(byManager.status).toBe(403);
  });
});
