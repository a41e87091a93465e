import fs from 'node:fs';
import path from 'node:path';
import type { CheckoutSession, LineItem } from './sessions.js';

export interface WebhookEndpoint {
  id: string;
  object: 'webhook_endpoint';
  url: string;
  enabled_events: string[];
  secret: string;
  status: 'enabled' | 'disabled';
  created: number;
  livemode: false;
}

export interface StripeEvent {
  id: string;
  object: 'event';
  api_version: string;
  created: number;
  type: string;
  data: { object: Record<string, unknown> };
  livemode: false;
  pending_webhooks: number;
  request: { id: null; idempotency_key: null };
}

export interface DeliveryAttempt {
  at: string;
  /** HTTP status of the endpoint's answer, absent when it could not be reached */
  status?: number;
  error?: string;
}

export interface Delivery {
  id: string;
  eventId: string;
  endpointId: string;
  url: string;
  state: 'pending' | 'delivered' | 'failed';
  attempts: DeliveryAttempt[];
  /** ISO time of the next try while pending */
  nextAttemptAt?: string;
}

export interface StoredSession {
  session: CheckoutSession;
  lineItems: LineItem[];
  /** the payment intent object once a card was tried; one per session as with Stripe */
  paymentIntent?: PaymentIntent;
  /** payment_intent_data[metadata] of the create call, copied onto the payment intent */
  paymentIntentMetadata: Record<string, string>;
}

export interface PaymentIntent {
  id: string;
  object: 'payment_intent';
  amount: number;
  currency: string;
  status: 'requires_payment_method' | 'succeeded';
  created: number;
  livemode: false;
  metadata: Record<string, string>;
  last_payment_error: null | { type: 'card_error'; code: 'card_declined'; decline_code: string; message: string };
  [key: string]: unknown;
}

interface State {
  sessions: Record<string, StoredSession>;
  endpoints: WebhookEndpoint[];
  events: StripeEvent[];
  deliveries: Delivery[];
}

/**
 * Everything the payments fake knows, in memory and mirrored to one JSON file (written to a
 * temporary name and renamed, so a crash never leaves half a file) so a restart keeps open
 * checkout pages and the delivery log.
 */
export class PaymentsStore {
  state: State = { sessions: {}, endpoints: [], events: [], deliveries: [] };

  constructor(private readonly file?: string) {
    if (file && fs.existsSync(file)) {
      try {
        this.state = { ...this.state, ...(JSON.parse(fs.readFileSync(file, 'utf8')) as State) };
      } catch (err) {
        throw new Error(`cannot read the payments fake's state ${file}: ${(err as Error).message}; delete it to start empty`);
      }
    }
  }

  save(): void {
    if (!this.file) return;
    fs.mkdirSync(path.dirname(this.file), { recursive: true });
    const tmp = `${this.file}.${process.pid}.tmp`;
    fs.writeFileSync(tmp, JSON.stringify(this.state));
    fs.renameSync(tmp, this.file);
  }

  session(id: string): StoredSession | undefined {
    return this.state.sessions[id];
  }

  event(id: string): StripeEvent | undefined {
    return this.state.events.find((e) => e.id === id);
  }
}
