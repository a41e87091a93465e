import express, { type NextFunction, type Request, type Response } from 'express';
import { z } from 'zod';
import { payWithCard } from './checkout.js';
import { expireSession } from './expiry.js';
import { checkoutPage, messagePage } from './checkout-page.js';
import { notFound, StripeError } from './errors.js';
import { newId, nowSeconds } from './ids.js';
import { buildSession, paramError, parseCreateSession, successRedirect } from './sessions.js';
import type { PaymentsStore, WebhookEndpoint } from './store.js';
import type { WebhookDeliverer } from './webhooks.js';

/**
 * The payments fake's HTTP surface: the part of Stripe's API the product uses (for the official
 * stripe SDK pointed at this host), the hosted checkout page, and /_fake/* helpers for tests.
 */
export interface PaymentsAppDeps {
  store: PaymentsStore;
  deliverer: WebhookDeliverer;
  /** this fake's own address, used in checkout URLs */
  baseUrl: () => string;
}

const list = <T>(data: T[], url: string) => ({ object: 'list' as const, data, has_more: false, url });

const endpointSchema = z.strictObject({
  url: z.url(),
  enabled_events: z.preprocess((v) => (v && typeof v === 'object' && !Array.isArray(v) ? Object.values(v) : v), z.array(z.string().min(1)).min(1)),
  description: z.string().optional(),
  metadata: z.record(z.string(), z.string()).optional(),
  api_version: z.string().optional(),
});

function expandList(req: Request): string[] {
  const raw = req.query.expand;
  if (Array.isArray(raw)) return raw.map(String);
  if (raw && typeof raw === 'object') return Object.values(raw).map(String);
  return typeof raw === 'string' ? [raw] : [];
}

export function createPaymentsApp({ store, deliverer, baseUrl }: PaymentsAppDeps) {
  const app = express();
  // Stripe's nested form fields (`line_items[0][price_data][currency]`) need qs, in bodies and queries.
  app.set('query parser', 'extended');
  app.disable('x-powered-by');
  app.use(express.urlencoded({ extended: true, limit: '1mb' }));
  app.use(express.json({ limit: '1mb' }));

  // --- Stripe API (/v1): bearer secret key, as the SDK sends it
  const v1 = express.Router();
  const idempotent = new Map<string, { status: number; body: unknown }>();
  v1.use((req, res, next) => {
    const auth = req.get('authorization') ?? '';
    if (!/^Bearer sk_(test|live)_\S+$/.test(auth)) {
      res.status(401).json(new StripeError(401, 'You did not provide a valid API key (Authorization: Bearer sk_test_...).').toJSON());
      return;
    }
    const key = req.method === 'POST' ? req.get('idempotency-key') : undefined;
    if (key) {
      const seen = idempotent.get(`${req.path}|${key}`);
      if (seen) {
        res.status(seen.status).json(seen.body);
        return;
      }
      const json = res.json.bind(res);
      res.json = (body: unknown) => {
        idempotent.set(`${req.path}|${key}`, { status: res.statusCode, body });
        // keep the newest 1000 keys; Stripe keeps them 24 h, a local fake needs far fewer
        if (idempotent.size > 1000) idempotent.delete(idempotent.keys().next().value!);
        return json(body);
      };
    }
    next();
  });

  v1.post('/checkout/sessions', (req, res) => {
    const params = parseCreateSession(req.body);
    const { session, lineItems } = buildSession(params, baseUrl());
    store.state.sessions[session.id] = { session, lineItems, paymentIntentMetadata: params.payment_intent_data?.metadata ?? {} };
    store.save();
    res.json(params.expand?.includes('line_items') ? { ...session, line_items: list(lineItems, `/v1/checkout/sessions/${session.id}/line_items`) } : session);
  });
  v1.get('/checkout/sessions', (req, res) => {
    const limit = Math.min(100, Math.max(1, Number(req.query.limit ?? 10) || 10));
    const all = Object.values(store.state.sessions).map((s) => s.session).sort((a, b) => b.created - a.created);
    res.json({ ...list(all.slice(0, limit), '/v1/checkout/sessions'), has_more: all.length > limit });
  });
  v1.get('/checkout/sessions/:id', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) throw notFound('checkout.session', req.params.id);
    const expand = expandList(req);
    res.json({
      ...stored.session,
      ...(expand.includes('line_items') ? { line_items: list(stored.lineItems, `/v1/checkout/sessions/${stored.session.id}/line_items`) } : {}),
      ...(expand.includes('payment_intent') && stored.paymentIntent ? { payment_intent: stored.paymentIntent } : {}),
    });
  });
  v1.get('/checkout/sessions/:id/line_items', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) throw notFound('checkout.session', req.params.id);
    res.json(list(stored.lineItems, `/v1/checkout/sessions/${stored.session.id}/line_items`));
  });
  v1.post('/checkout/sessions/:id/expire', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) throw notFound('checkout.session', req.params.id);
    if (stored.session.status !== 'open') throw new StripeError(400, `Only open checkout sessions can be expired; this one is ${stored.session.status}.`);
    expireSession(store, deliverer, stored);
    res.json(stored.session);
  });
  v1.get('/payment_intents/:id', (req, res) => {
    const found = Object.values(store.state.sessions).find((s) => s.paymentIntent?.id === req.params.id);
    if (!found?.paymentIntent) throw notFound('payment_intent', req.params.id);
    res.json(found.paymentIntent);
  });

  v1.post('/webhook_endpoints', (req, res) => {
    const parsed = endpointSchema.safeParse(req.body ?? {});
    if (!parsed.success) throw paramError(parsed.error);
    const endpoint: WebhookEndpoint = {
      id: newId('we'),
      object: 'webhook_endpoint',
      url: parsed.data.url,
      enabled_events: parsed.data.enabled_events,
      secret: newId('whsec'),
      status: 'enabled',
      created: nowSeconds(),
      livemode: false,
    };
    store.state.endpoints.push(endpoint);
    store.save();
    res.json(endpoint);
  });
  // Stripe shows the secret only when the endpoint is created.
  const publicEndpoint = ({ secret: _secret, ...rest }: WebhookEndpoint) => rest;
  v1.get('/webhook_endpoints', (_req, res) => {
    res.json(list(store.state.endpoints.map(publicEndpoint), '/v1/webhook_endpoints'));
  });
  v1.get('/webhook_endpoints/:id', (req, res) => {
    const endpoint = store.state.endpoints.find((e) => e.id === req.params.id);
    if (!endpoint) throw notFound('webhook_endpoint', req.params.id);
    res.json(publicEndpoint(endpoint));
  });
  v1.delete('/webhook_endpoints/:id', (req, res) => {
    const i = store.state.endpoints.findIndex((e) => e.id === req.params.id);
    if (i < 0) throw notFound('webhook_endpoint', req.params.id);
    store.state.endpoints.splice(i, 1);
    store.save();
    res.json({ id: req.params.id, object: 'webhook_endpoint', deleted: true });
  });

  v1.get('/events', (req, res) => {
    const type = typeof req.query.type === 'string' ? req.query.type : undefined;
    const events = store.state.events.filter((e) => !type || e.type === type).reverse();
    res.json(list(events.slice(0, 100), '/v1/events'));
  });
  v1.get('/events/:id', (req, res) => {
    const event = store.event(req.params.id);
    if (!event) throw notFound('event', req.params.id);
    res.json(event);
  });
  app.use('/v1', v1);

  // --- hosted checkout page (what the buyer's browser sees)
  app.get('/checkout/:id', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) res.status(404).type('html').send(messagePage('Checkout not found', 'This checkout link is unknown or was created by an earlier test run.'));
    else res.type('html').send(checkoutPage(stored));
  });
  app.post('/checkout/:id/pay', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) {
      res.status(404).type('html').send(messagePage('Checkout not found', 'This checkout link is unknown.'));
      return;
    }
    if (stored.session.status !== 'open') {
      res.status(409).type('html').send(checkoutPage(stored));
      return;
    }
    const { outcome } = payWithCard(store, deliverer, stored, req.body?.card);
    if (outcome.kind === 'paid') res.redirect(303, successRedirect(stored.session));
    else if (outcome.kind === 'declined') res.status(402).type('html').send(checkoutPage(stored, { kind: 'error', text: `${outcome.message} Try another card.` }));
    else res.status(400).type('html').send(checkoutPage(stored, { kind: 'error', text: outcome.message }));
  });
  app.post('/checkout/:id/cancel', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) res.status(404).type('html').send(messagePage('Checkout not found', 'This checkout link is unknown.'));
    else if (stored.session.cancel_url) res.redirect(303, stored.session.cancel_url);
    else res.type('html').send(messagePage('Payment cancelled', 'Nothing was charged. You can close this page.'));
  });

  // --- helpers for tests
  app.get('/_fake/health', (_req, res) => {
    res.json({ ok: true, sessions: Object.keys(store.state.sessions).length, endpoints: store.state.endpoints.length });
  });
  app.get('/_fake/events', (_req, res) => {
    const events = [...store.state.events].reverse().map((event) => ({
      ...event,
      deliveries: store.state.deliveries.filter((d) => d.eventId === event.id),
    }));
    res.json({ events });
  });
  app.post('/_fake/checkout/:id/pay', (req, res) => {
    const stored = store.session(req.params.id);
    if (!stored) throw notFound('checkout.session', req.params.id);
    const { outcome, event } = payWithCard(store, deliverer, stored, req.body?.card);
    if (outcome.kind === 'invalid') throw new StripeError(400, outcome.message, 'card_error', 'card', 'invalid_number');
    res.status(outcome.kind === 'paid' ? 200 : 402).json({ outcome: outcome.kind, session: stored.session, event: event?.id });
  });
  app.post('/_fake/events/:id/redeliver', (req, res) => {
    const event = store.event(req.params.id);
    if (!event) throw notFound('event', req.params.id);
    res.json({ deliveries: deliverer.redeliver(event) });
  });

  app.use((req, _res, next) => next(new StripeError(404, `Unrecognized request URL (${req.method}: ${req.path}).`)));
  // Express 5 needs all four parameters to treat this as the error handler.
  app.use((err: unknown, _req: Request, res: Response, _next: NextFunction) => {
    if (err instanceof StripeError) {
      res.status(err.status).json(err.toJSON());
      return;
    }
    const status = (err as { status?: number }).status;
    if (typeof status === 'number' && status >= 400 && status < 500) {
      res.status(status).json(new StripeError(status, `Invalid request: ${(err as Error).message}`).toJSON());
      return;
    }
    process.stderr.write(`payments fake: ${(err as Error).stack ?? String(err)}\n`);
    res.status(500).json(new StripeError(500, 'The payments fake failed; see its log.', 'api_error').toJSON());
  });
  return app;
}
