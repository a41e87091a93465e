import { newId, nowSeconds } from './ids.js';
import { signatureHeader } from './signature.js';
import type { Delivery, PaymentsStore, StripeEvent, WebhookEndpoint } from './store.js';

/** The API version stamped on events: the stripe 23.1.0 SDK's default. */
export const API_VERSION = '2026-10-28.endive';

export interface RetryPolicy {
  /** delay before the 2nd attempt; doubles each time */
  baseDelayMs: number;
  maxDelayMs: number;
  maxAttempts: number;
  /** how long one attempt may take before it counts as unreachable */
  timeoutMs: number;
}

export const DEFAULT_RETRY: RetryPolicy = { baseDelayMs: 1000, maxDelayMs: 60_000, maxAttempts: 8, timeoutMs: 10_000 };

/** Exponential backoff as Stripe does it, without its days-long tail: base * 2^(attempt-1), capped. */
export function backoffDelay(policy: RetryPolicy, attemptsMade: number): number {
  return Math.min(policy.maxDelayMs, policy.baseDelayMs * 2 ** (attemptsMade - 1));
}

export function endpointWants(endpoint: WebhookEndpoint, type: string): boolean {
  return endpoint.status === 'enabled' && (endpoint.enabled_events.includes('*') || endpoint.enabled_events.includes(type));
}

/**
 * Sends events to the registered endpoints: a POST of the event JSON signed per attempt with a
 * fresh timestamp (as Stripe re-signs retries), retried with backoff on non-2xx answers or network
 * errors until maxAttempts. Each delivery's attempts are kept in the store for /_fake/events.
 */
export class WebhookDeliverer {
  private timers = new Set<NodeJS.Timeout>();
  private inflight = new Set<Promise<void>>();
  private closed = false;

  constructor(
    private readonly store: PaymentsStore,
    private readonly policy: RetryPolicy = DEFAULT_RETRY,
  ) {}

  /** Record a new event and deliver it to every endpoint that wants its type. */
  emit(type: string, object: Record<string, unknown>): StripeEvent {
    const endpoints = this.store.state.endpoints.filter((e) => endpointWants(e, type));
    const event: StripeEvent = {
      id: newId('evt'),
      object: 'event',
      api_version: API_VERSION,
      created: nowSeconds(),
      type,
      data: { object },
      livemode: false,
      pending_webhooks: endpoints.length,
      request: { id: null, idempotency_key: null },
    };
    this.store.state.events.push(event);
    for (const endpoint of endpoints) this.schedule(event, endpoint);
    this.store.save();
    return event;
  }

  /** Deliver an existing event again (to every endpoint that wants it), as a new delivery. */
  redeliver(event: StripeEvent): Delivery[] {
    const out = this.store.state.endpoints.filter((e) => endpointWants(e, event.type)).map((e) => this.schedule(event, e));
    this.store.save();
    return out;
  }

  /** Pick up deliveries left pending by an earlier run of the fake. */
  resumePending(): void {
    for (const d of this.store.state.deliveries) {
      if (d.state === 'pending') this.later(d, 0);
    }
  }

  private schedule(event: StripeEvent, endpoint: WebhookEndpoint): Delivery {
    const delivery: Delivery = { id: newId('whd'), eventId: event.id, endpointId: endpoint.id, url: endpoint.url, state: 'pending', attempts: [] };
    this.store.state.deliveries.push(delivery);
    this.later(delivery, 0);
    return delivery;
  }

  private later(delivery: Delivery, delayMs: number): void {
    if (this.closed) return;
    delivery.nextAttemptAt = new Date(Date.now() + delayMs).toISOString();
    const timer = setTimeout(() => {
      this.timers.delete(timer);
      const p = this.attempt(delivery).finally(() => this.inflight.delete(p));
      this.inflight.add(p);
    }, delayMs);
    this.timers.add(timer);
  }

  private async attempt(delivery: Delivery): Promise<void> {
    const event = this.store.event(delivery.eventId);
    const endpoint = this.store.state.endpoints.find((e) => e.id === delivery.endpointId);
    if (!event || !endpoint) {
      delivery.state = 'failed';
      delivery.attempts.push({ at: new Date().toISOString(), error: 'event or endpoint no longer exists' });
      this.store.save();
      return;
    }
    // Stripe sends pretty-printed JSON; the receiver must verify the exact bytes it got.
    const payload = JSON.stringify(event, null, 2);
    const at = new Date().toISOString();
    try {
      const res = await fetch(endpoint.url, {
        method: 'POST',
        headers: {
          'Content-Type': 'application/json; charset=utf-8',
          'Stripe-Signature': signatureHeader(payload, endpoint.secret, nowSeconds()),
          'User-Agent': 'toppleworks-payments-fake/1.0',
        },
        body: payload,
        signal: AbortSignal.timeout(this.policy.timeoutMs),
      });
      await res.arrayBuffer().catch(() => undefined);
      delivery.attempts.push({ at, status: res.status });
      if (res.ok) delivery.state = 'delivered';
    } catch (err) {
      const cause = (err as { cause?: { code?: string } }).cause?.code;
      delivery.attempts.push({ at, error: cause ?? (err as Error).message });
    }
    if (delivery.state === 'pending') {
      if (delivery.attempts.length >= this.policy.maxAttempts) delivery.state = 'failed';
      else this.later(delivery, backoffDelay(this.policy, delivery.attempts.length));
    }
    if (delivery.state !== 'pending') delete delivery.nextAttemptAt;
    this.store.save();
  }

  /** Stop retrying (pending deliveries stay pending in the store) and wait for attempts in flight. */
  async close(): Promise<void> {
    this.closed = true;
    for (const t of this.timers) clearTimeout(t);
    this.timers.clear();
    await Promise.allSettled([...this.inflight]);
  }
}
