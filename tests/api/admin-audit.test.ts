import { randomUUID } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import type Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, creditPurchases, figureVersions, figures } from '../../drizzle/schema.js';
import { auditResponseSchema } from '../../shared/api/admin.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { bookOfflinePurchase } from '../../api/src/billing/adjustments.js';
import { handlePaymentEvent } from '../../api/src/billing/purchases.js';
import { finishedRun, markReady } from './figures-fixtures.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';

/**
 * The audit trail's completeness (issue 8: "every admin action, billing event, role change and
 * publication is recorded append-only with who, when, what and why; ... filterable by lab, person,
 * kind and date"), against the real PostgreSQL. Payment events are shaped as Stripe documents them
 * (https://docs.stripe.com/api/events/object) and go through the same handler as the signed webhook.
 */

let h: Harness;
const p = {} as Record<'admin' | 'boss' | 'writer', { id: string; email: string; name: string }>;
const s = {} as Record<keyof typeof p, Session>;
let labId: string;

const trail = async (query: string) => {
  const res = await as(h.http.get(`/api/admin/audit?${query}`), s.admin);
  expect(res.status).toBe(200);
  return auditResponseSchema.parse(res.body).events;
};
const eventOf = (type: string, object: object) => ({ id: `evt_audit_${randomUUID()}`, object: 'event', created: Math.floor(Date.now() / 1000), type, data: { object }, livemode: false }) as unknown as Stripe.Event;

beforeAll(async () => {
  h = await startHarness('admin-audit');
  p.admin = await createUser(h, 'Audit Admin', { isAdmin: true });
  p.boss = await createUser(h, 'Audit Boss');
  p.writer = await createUser(h, 'Audit Writer');
  labId = await createLab(h, `Audit Lab ${h.tag}`, [
    { userId: p.boss.id, role: 'manager' },
    { userId: p.writer.id, role: 'author' },
  ]);
  for (const k of Object.keys(p) as (keyof typeof p)[]) s[k] = await signIn(h, p[k].email, TEST_PASSWORD);
});
afterAll(async () => {
  await h?.close();
});

describe('billing events in the trail', () => {
  it('records a declined card and an expired checkout from the provider, and an offline purchase once', async () => {
    const [open] = await h.deps.db
      .insert(creditPurchases)
      .values({ labId, buyerId: p.boss.id, pack: 'sheet', credits: 1000, amount: 900, currency: 'eur', checkoutSessionId: `cs_audit_${randomUUID()}` })
      .returning();
    const declined = await handlePaymentEvent(h.deps.db, eventOf('payment_intent.payment_failed', { id: 'pi_audit', object: 'payment_intent', metadata: { purchaseId: open!.id }, last_payment_error: { message: 'Your card was declined.' } }));
    expect(declined.outcome).toBe('declined: Your card was declined.');
    const expired = await handlePaymentEvent(h.deps.db, eventOf('checkout.session.expired', { id: open!.checkoutSessionId, object: 'checkout.session', status: 'expired' }));
    expect(expired.outcome).toBe('expired');

    await bookOfflinePurchase(h.deps.db, labId, 5000, `audit-offline-${h.tag}`, p.boss.id);
    // the same reference again books nothing and records nothing
    await bookOfflinePurchase(h.deps.db, labId, 5000, `audit-offline-${h.tag}`, p.boss.id);

    const billing = await trail(`labId=${labId}&kind=credits.`);
    expect(billing.map((e) => [e.action, e.actorName, e.reason])).toEqual([
      ['credits.purchase', 'Audit Boss', 'offline purchase'],
      ['credits.checkout-expired', null, 'the checkout was not completed in time'],
      ['credits.payment-declined', null, 'Your card was declined.'],
    ]);
    expect(billing[0]!.detail).toMatchObject({ credits: 5000, reference: `audit-offline-${h.tag}` });
    expect(billing[2]!.subjectId).toBe(open!.id);
  });
});

describe('publication in the trail', () => {
  it('records publishing and withdrawing a figure with who did it', async () => {
    const runId = await finishedRun(h, labId, p.writer.id, 'audited figure run');
    const spec = figureSpecSchema.parse({ panels: [{ runId }], size: { kind: 'column', column: 'single' } });
    const [f] = await h.deps.db.insert(figures).values({ slug: `audited-${h.tag}`, title: 'Audited', runId, createdById: p.writer.id, spec }).returning();
    await h.deps.db.insert(figureVersions).values({ figureId: f!.id, number: 1, spec, formats: ['png'] });
    await markReady(h, f!.id, 1);
    expect((await as(h.http.post(`/api/figures/${f!.slug}/publish`), s.writer)).status).toBe(200);
    expect((await as(h.http.post(`/api/figures/${f!.slug}/unpublish`), s.boss)).status).toBe(200);
    const events = await trail(`labId=${labId}&kind=figure.`);
    expect(events.map((e) => [e.action, e.actorName, e.subjectId])).toEqual([
      ['figure.unpublish', 'Audit Boss', f!.id],
      ['figure.publish', 'Audit Writer', f!.id],
    ]);
    // named by its title and linked to its lab page, which site admins may open, as a person is named
    expect(events.map((e) => [e.subjectName, e.subjectHref])).toEqual([
      ['Audited', `/lab/figures/audited-${h.tag}`],
      ['Audited', `/lab/figures/audited-${h.tag}`],
    ]);
    const admin = await as(h.http.get(`/api/figures/${f!.slug}`), s.admin);
    expect(admin.status).toBe(200);
    expect(admin.body.figure.title).toBe('Audited');
  });
});

describe('runs and series in the trail', () => {
  it('names a run by its title and links its page, which a site admin may open', async () => {
    const created = await as(h.http.post('/api/runs'), s.writer).send({ labId, title: `Audited run ${h.tag}`, spec: { lattice: { preset: 'square' }, chips: 5 } });
    expect(created.status).toBe(201);
    const id: string = created.body.run.id;
    const events = (await trail(`labId=${labId}&kind=run.`)).filter((e) => e.subjectId === id);
    expect(events.map((e) => [e.action, e.actorName, e.subjectName, e.subjectHref])).toEqual([['run.create', 'Audit Writer', `Audited run ${h.tag}`, `/runs/${id}`]]);
    expect((await as(h.http.get(`/api/runs/${id}`), s.admin)).status).toBe(200);
  });

  it('names a series by its title and links its page, which a site admin may open', async () => {
    const created = await as(h.http.post('/api/series'), s.writer).send({ labId, title: `Audited series ${h.tag}`, spec: { lattice: { preset: 'square' } }, chips: [5, 20] });
    expect(created.status).toBe(201);
    const id: string = created.body.series.id;
    const events = (await trail(`labId=${labId}&kind=series.`)).filter((e) => e.subjectId === id);
    expect(events.map((e) => [e.action, e.subjectName, e.subjectHref])).toEqual([['series.create', `Audited series ${h.tag}`, `/series/${id}`]]);
    expect((await as(h.http.get(`/api/series/${id}`), s.admin)).status).toBe(200);
  });
});

describe('filtering by person', () => {
  it('finds what was done to someone as well as what they did', async () => {
    const res = await as(h.http.put(`/api/labs/${labId}/members/${p.writer.id}/role`), s.boss).send({ role: 'manager', reason: 'co-runs the lab now' });
    expect(res.status).toBe(200);
    const quota = await as(h.http.put(`/api/labs/${labId}/members/${p.writer.id}/quota`), s.boss).send({ monthlyQuota: 300 });
    expect(quota.status).toBe(200);

    const about = await trail(`personId=${p.writer.id}&kind=member.`);
    expect(about.map((e) => [e.action, e.actorName, e.subjectName])).toEqual([
      ['member.quota', 'Audit Boss', 'Audit Writer'],
      ['member.role', 'Audit Boss', 'Audit Writer'],
    ]);
    expect(about[0]!.detail).toEqual({ from: null, monthlyQuota: 300 });
    expect(about[1]!.detail).toEqual({ from: 'author', to: 'manager' });
    // by actor only, the writer did none of it
    expect(await trail(`actorId=${p.writer.id}&kind=member.`)).toEqual([]);
    // the writer's own publication shows under their name too
    expect((await trail(`personId=${p.writer.id}`)).map((e) => e.action)).toContain('figure.publish');
    const [row] = await h.deps.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'member.role'), eq(auditEvents.subjectId, p.writer.id)));
    expect(row!.reason).toBe('co-runs the lab now');
    expect((await as(h.http.get('/api/admin/audit?personId=someone'), s.admin)).status).toBe(400);
  });
});
