import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { creditPurchases, ledgerEntries } from '../../drizzle/schema.js';
import { checkoutResponseSchema, creditsSummaryResponseSchema } from '../../shared/api/credits.js';
import { startPaymentsFake, type PaymentsFake } from '../../infra/fakes/payments.js';
import { as, createLab, createUser, signIn, TEST_PASSWORD, type Session } from '../api/support/harness.js';
import { faultEnv, startApi } from './support/app.js';
import { freePort, privatePostgres, sleep, until } from './support/services.js';

/**
 * PostgreSQL stopped and started again under a running API (its own cluster, infra/lib/postgres.ts):
 * during the outage requests fail with 503 and a message (the process survives), afterwards they
 * succeed, and the ledger holds exactly the entries whose requests were answered 201. The payments
 * fake (its own instance) delivers a checkout's webhook while the database is down: the delivery
 * fails, the fake retries, and the lab is credited once; a duplicate and a late, out-of-order event
 * change nothing.
 */

let pg: Awaited<ReturnType<typeof privatePostgres>>;
let fake: PaymentsFake;
let api: Awaited<ReturnType<typeof startApi>>;
let admin: Session;
let labId: string;
const SECRET = 'whsec_faults_postgres';

beforeAll(async () => {
  pg = await privatePostgres('pg-restart');
  const apiPort = await freePort();
  fake = await startPaymentsFake({ webhook: { url: `http://127.0.0.1:${apiPort}/api/payments/webhook`, secret: SECRET }, retry: { baseDelayMs: 300, maxDelayMs: 2000, maxAttempts: 20, timeoutMs: 5000 } });
  api = await startApi('pgfault', faultEnv({ DATABASE_URL: pg.url, STRIPE_API_BASE: fake.url, STRIPE_WEBHOOK_SECRET: SECRET }), apiPort);
  const u = await createUser(api, 'Outage Admin', { isAdmin: true });
  labId = await createLab(api, 'Outage Lab', [{ userId: u.id, role: 'manager' }]);
  admin = await signIn(api, u.email, TEST_PASSWORD);
}, 120_000);
afterAll(async () => {
  await api?.close();
  await fake?.close();
  await pg?.close();
});

const grant = (n: number) => as(api.http.post(`/api/labs/${labId}/credits/adjustments`), admin).send({ kind: 'grant', credits: 1, reason: `outage grant ${n}` });
const available = async () => creditsSummaryResponseSchema.parse((await as(api.http.get(`/api/labs/${labId}/credits`), admin).expect(200)).body).balance.available;
const grantsRecorded = async () =>
  (await api.deps.db.select({ n: sql<number>`count(*)::int` }).from(ledgerEntries).where(and(eq(ledgerEntries.labId, labId), eq(ledgerEntries.kind, 'grant'))))[0]!.n;

describe('PostgreSQL restarted under the API', () => {
  it('answers 503 with a message while it is down, recovers after, and loses or doubles no ledger entry', { timeout: 120_000 }, async () => {
    const before = await available();
    const answers: number[] = [];
    const messages = new Set<string>();
    let n = 0;
    let stop = false;
    // a steady stream of grants across the outage, one at a time as a client would retry
    const stream = (async () => {
      while (!stop) {
        const res = await grant(++n);
        answers.push(res.status);
        if (res.status !== 201) messages.add(String(res.body.error));
        await sleep(30);
      }
    })();
    await until('some grants before the outage', async () => answers.filter((s) => s === 201).length >= 3);
    await pg.stop();
    const down = await until('a request to meet the outage', async () => answers.includes(503), 20_000);
    expect(down).toBe(true);

    // during the outage: liveness answers at once, readiness and data routes say why they cannot
    const live = await api.http.get('/api/health');
    expect(live.status).toBe(200);
    const ready = await api.http.get('/api/health/ready');
    expect(ready.status).toBe(503);
    expect(ready.body).toMatchObject({ ok: false, postgres: false, error: expect.stringMatching(/PostgreSQL/) });
    const me = await as(api.http.get('/api/me'), admin);
    expect(me.status).toBe(503);
    expect(me.headers['retry-after']).toBe('5');
    expect(me.body.error).toMatch(/database/);
    await sleep(1000);

    await pg.start();
    await until('grants to succeed again', async () => answers.lastIndexOf(201) > answers.lastIndexOf(503), 30_000);
    stop = true;
    await stream;

    expect(new Set(answers)).toEqual(new Set([201, 503]));
    expect([...messages]).toEqual(['temporarily unavailable: the database is not answering; try again in a moment']);
    const ok = answers.filter((s) => s === 201).length;
    console.log(`postgres restart: ${answers.length} grants sent, ${ok} answered 201, ${answers.length - ok} answered 503`);
    // each 201 is exactly one entry: none lost, none doubled, nothing from a refused request
    expect(await grantsRecorded()).toBe(ok);
    expect(await available()).toBe(before + ok);
    expect((await as(api.http.get('/api/me'), admin)).status).toBe(200);
    expect((await api.http.get('/api/health/ready')).status).toBe(200);
  });

  it('credits a checkout once when its webhook first met the outage, then ignores a duplicate and a late older event', { timeout: 120_000 }, async () => {
    const before = await available();
    const res = await as(api.http.post(`/api/labs/${labId}/credits/checkout`), admin).send({ pack: 'sheet' });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const { purchaseId } = checkoutResponseSchema.parse(res.body);
    const [row] = await api.deps.db.select().from(creditPurchases).where(eq(creditPurchases.id, purchaseId));
    const sessionId = row!.checkoutSessionId;
    const pay = async (card: string) =>
      (await (await fetch(`${fake.url}/_fake/checkout/${sessionId}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ card }) })).json()) as { outcome: string; event?: string };
    type FakeEvent = { id: string; deliveries: { state: string; attempts: { status?: number }[] }[] };
    const eventById = async (id: string) => ((await (await fetch(`${fake.url}/_fake/events`)).json()) as { events: FakeEvent[] }).events.find((e) => e.id === id)!;

    // a declined card first (its payment_failed event is delivered normally), then the database goes down and the card pays
    // (Stripe's documented test cards, docs.stripe.com/testing)
    const declined = await pay('4000 0000 0000 0002');
    expect(declined.outcome).toBe('declined');
    await until('the decline to be delivered', async () => (await eventById(declined.event!)).deliveries.every((d) => d.state === 'delivered'));
    await pg.stop();
    const paid = await pay('4242 4242 4242 4242');
    expect(paid.outcome).toBe('paid');
    await until('a delivery to fail against the outage', async () => (await eventById(paid.event!)).deliveries[0]!.attempts.length >= 2, 20_000);
    await sleep(800); // late: the provider keeps retrying for a while
    await pg.start();
    const delivered = await until('the retried delivery to succeed', async () => {
      const d = (await eventById(paid.event!)).deliveries[0]!;
      return d.state === 'delivered' && d;
    }, 30_000);
    expect(delivered.attempts.at(-1)!.status).toBe(200);
    expect(delivered.attempts.slice(0, -1).every((a) => a.status === 503 || a.status === undefined)).toBe(true);
    expect(await available()).toBe(before + 1000);

    // the same event again, and the older decline delivered after the payment
    for (const id of [paid.event!, declined.event!, paid.event!]) await fetch(`${fake.url}/_fake/events/${id}/redeliver`, { method: 'POST' });
    await until('the redeliveries to be answered', async () => {
      const [p, d] = [await eventById(paid.event!), await eventById(declined.event!)];
      return p.deliveries.length >= 3 && d.deliveries.length >= 2 && [...p.deliveries, ...d.deliveries].every((x) => x.state === 'delivered');
    });
    expect(await available()).toBe(before + 1000);
    const [purchase] = await api.deps.db.select().from(creditPurchases).where(eq(creditPurchases.id, purchaseId));
    expect(purchase).toMatchObject({ status: 'paid' });
    const entries = await api.deps.db.select().from(ledgerEntries).where(eq(ledgerEntries.idempotencyKey, `purchase:${sessionId}`));
    expect(entries).toHaveLength(1);
  });
});
