import http from 'node:http';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import { createPaymentsApp } from './payments/app.js';
import { EXPIRY_SWEEP_MS, expireLapsedSessions } from './payments/expiry.js';
import { nowSeconds } from './payments/ids.js';
import { PaymentsStore } from './payments/store.js';
import { DEFAULT_RETRY, WebhookDeliverer, type RetryPolicy } from './payments/webhooks.js';
import { closeOnSignals, exitWith, isMain, portFlag, readFlags } from './cli.js';

/**
 * The payments fake: a local server speaking the subset of Stripe's HTTP API the product uses,
 * with a hosted checkout page and signed webhook deliveries. Point the official SDK at it with
 * `new Stripe(key, { host, port, protocol: 'http' })`.
 */
export interface PaymentsFakeOptions {
  host?: string;
  /** 0 picks a free port */
  port?: number;
  /** folder for state.json; without it the state lives in memory only */
  dir?: string;
  /** an endpoint registered at start for every event type (FAKE_WEBHOOK_URL + STRIPE_WEBHOOK_SECRET) */
  webhook?: { url: string; secret: string };
  retry?: Partial<RetryPolicy>;
}

export interface PaymentsFake {
  port: number;
  url: string;
  store: PaymentsStore;
  close(): Promise<void>;
}

export async function startPaymentsFake(opts: PaymentsFakeOptions = {}): Promise<PaymentsFake> {
  const host = opts.host ?? '127.0.0.1';
  const store = new PaymentsStore(opts.dir ? path.join(opts.dir, 'state.json') : undefined);
  if (opts.webhook) {
    // The configured endpoint replaces the one from an earlier start, so its secret follows the env.
    store.state.endpoints = store.state.endpoints.filter((e) => e.id !== 'we_configured');
    store.state.endpoints.unshift({
      id: 'we_configured',
      object: 'webhook_endpoint',
      url: opts.webhook.url,
      enabled_events: ['*'],
      secret: opts.webhook.secret,
      status: 'enabled',
      created: nowSeconds(),
      livemode: false,
    });
    store.save();
  }
  const deliverer = new WebhookDeliverer(store, { ...DEFAULT_RETRY, ...opts.retry });
  let url = '';
  const server = http.createServer(createPaymentsApp({ store, deliverer, baseUrl: () => url }));
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, host, () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  url = `http://${host}:${port}`;
  deliverer.resumePending();
  const sweep = setInterval(() => expireLapsedSessions(store, deliverer), EXPIRY_SWEEP_MS);
  sweep.unref();
  return {
    port,
    url,
    store,
    async close() {
      clearInterval(sweep);
      await deliverer.close();
      server.closeAllConnections();
      await new Promise<void>((r) => server.close(() => r()));
    },
  };
}


if (isMain(import.meta.url)) {
  const flags = readFlags(['host', 'port', 'dir', 'webhook-url', 'webhook-secret', 'retry-base-ms']);
  const webhookUrl = flags['webhook-url'] ?? process.env.FAKE_WEBHOOK_URL;
  const secret = flags['webhook-secret'] ?? process.env.STRIPE_WEBHOOK_SECRET;
  if (webhookUrl && !secret) exitWith(2, 'a webhook URL needs a secret: pass --webhook-secret or set STRIPE_WEBHOOK_SECRET');
  const retryBase = flags['retry-base-ms'] ?? process.env.FAKE_WEBHOOK_RETRY_MS;
  if (retryBase !== undefined && !(Number(retryBase) > 0)) exitWith(2, `--retry-base-ms must be a positive number, got '${retryBase}'`);
  try {
    const fake = await startPaymentsFake({
      host: flags.host,
      port: portFlag(flags, 'port', 14570),
      dir: flags.dir,
      webhook: webhookUrl && secret ? { url: webhookUrl, secret } : undefined,
      retry: retryBase ? { baseDelayMs: Number(retryBase) } : undefined,
    });
    console.log(`payments fake: ${fake.url}${webhookUrl ? `, events to ${webhookUrl}` : ''}`);
    closeOnSignals(() => fake.close());
  } catch (err) {
    exitWith(1, `payments fake: cannot start: ${(err as Error).message}`);
  }
}
