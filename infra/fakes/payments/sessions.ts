import { z } from 'zod';
import { StripeError } from './errors.js';
import { newId, nowSeconds } from './ids.js';

/**
 * Checkout sessions: parsing the create call the stripe SDK sends (form-encoded, so every number
 * arrives as a string) and building the objects in Stripe's shape. Pure: no I/O here.
 */

const amount = z.coerce.number().int().min(0).max(99_999_999);
const quantity = z.coerce.number().int().min(1).max(999_999).default(1);
const currency = z.string().regex(/^[a-zA-Z]{3}$/, 'must be a three-letter ISO currency code').transform((c) => c.toLowerCase());
const metadata = z.record(z.string().max(40), z.string().max(500)).refine((m) => Object.keys(m).length <= 50, 'at most 50 keys');

const priceDataItem = z.strictObject({
  price_data: z.strictObject({
    currency,
    unit_amount: amount,
    product_data: z.strictObject({
      name: z.string().min(1).max(250),
      description: z.string().max(500).optional(),
      metadata: metadata.optional(),
    }),
  }),
  quantity,
});
/** The older inline form: amount/currency/name on the line item itself. */
const amountItem = z.strictObject({
  amount,
  currency,
  name: z.string().min(1).max(250),
  description: z.string().max(500).optional(),
  quantity,
});

/** qs turns `line_items[25]` into an object keyed by index once past its array limit; accept both. */
const listOf = <T extends z.ZodType>(item: T) =>
  z.preprocess((v) => (v && typeof v === 'object' && !Array.isArray(v) ? Object.values(v) : v), z.array(item));

export const createSessionSchema = z.strictObject({
  mode: z.literal('payment', { error: "this fake supports mode 'payment' only" }),
  line_items: listOf(z.union([priceDataItem, amountItem])).refine((l) => l.length >= 1 && l.length <= 100, 'needs 1 to 100 line items'),
  success_url: z.url(),
  cancel_url: z.url().optional(),
  client_reference_id: z.string().max(200).optional(),
  customer_email: z.email().optional(),
  metadata: metadata.optional(),
  payment_method_types: listOf(z.string()).optional(),
  expires_at: z.coerce.number().int().optional(),
  locale: z.string().optional(),
  submit_type: z.string().optional(),
  payment_intent_data: z.strictObject({ description: z.string().optional(), metadata: metadata.optional() }).optional(),
  expand: listOf(z.string()).optional(),
});
export type CreateSessionParams = z.infer<typeof createSessionSchema>;

export interface LineItem {
  id: string;
  object: 'item';
  amount_subtotal: number;
  amount_total: number;
  currency: string;
  description: string;
  quantity: number;
  price: { id: string; object: 'price'; currency: string; unit_amount: number; product: string };
}

export interface CheckoutSession {
  id: string;
  object: 'checkout.session';
  amount_subtotal: number;
  amount_total: number;
  cancel_url: string | null;
  client_reference_id: string | null;
  created: number;
  currency: string;
  customer_email: string | null;
  expires_at: number;
  livemode: false;
  metadata: Record<string, string>;
  mode: 'payment';
  payment_intent: string | null;
  payment_status: 'unpaid' | 'paid';
  status: 'open' | 'complete' | 'expired';
  success_url: string;
  url: string | null;
}

/** For a failed union (either line item form), report the branch that got furthest into the input. */
function specific(issue: z.core.$ZodIssue): z.core.$ZodIssue {
  if (issue.code !== 'invalid_union' || issue.errors.length === 0) return issue;
  const candidates = issue.errors.map((branch) => branch[0]).filter((i): i is z.core.$ZodIssue => i !== undefined);
  const deepest = candidates.reduce((a, b) => (b.path.length > a.path.length ? b : a), candidates[0]!);
  return specific({ ...deepest, path: [...issue.path, ...deepest.path] } as z.core.$ZodIssue);
}

/** Turn zod issues into one Stripe-style message naming the parameter, e.g. `line_items[0][quantity]`. */
export function paramError(error: z.ZodError): StripeError {
  const issue = specific(error.issues[0]!);
  const [head, ...rest] = issue.path.map(String);
  const param = head === undefined ? undefined : head + rest.map((p) => `[${p}]`).join('');
  if (issue.code === 'unrecognized_keys') {
    const key = issue.keys[0]!;
    const full = param ? `${param}[${key}]` : key;
    return new StripeError(400, `Received unknown parameter: ${full}`, 'invalid_request_error', full, 'parameter_unknown');
  }
  if (issue.code === 'invalid_type' && issue.input === undefined) {
    return new StripeError(400, `Missing required param: ${param}.`, 'invalid_request_error', param, 'parameter_missing');
  }
  return new StripeError(400, `Invalid ${param ?? 'request'}: ${issue.message}`, 'invalid_request_error', param, 'parameter_invalid');
}

export function parseCreateSession(body: unknown): CreateSessionParams {
  const parsed = createSessionSchema.safeParse(body ?? {});
  if (!parsed.success) throw paramError(parsed.error);
  const currencies = new Set(parsed.data.line_items.map((i) => ('price_data' in i ? i.price_data.currency : i.currency)));
  if (currencies.size > 1) throw new StripeError(400, 'All line items must use the same currency.', 'invalid_request_error', 'line_items');
  return parsed.data;
}

export function buildSession(params: CreateSessionParams, baseUrl: string): { session: CheckoutSession; lineItems: LineItem[] } {
  const id = newId('cs_test');
  const created = nowSeconds();
  const lineItems: LineItem[] = params.line_items.map((item) => {
    const [unit, cur, name] =
      'price_data' in item
        ? [item.price_data.unit_amount, item.price_data.currency, item.price_data.product_data.name]
        : [item.amount, item.currency, item.name];
    const total = unit * item.quantity;
    return {
      id: newId('li'),
      object: 'item',
      amount_subtotal: total,
      amount_total: total,
      currency: cur,
      description: name,
      quantity: item.quantity,
      price: { id: newId('price'), object: 'price', currency: cur, unit_amount: unit, product: newId('prod') },
    };
  });
  const total = lineItems.reduce((s, li) => s + li.amount_total, 0);
  const session: CheckoutSession = {
    id,
    object: 'checkout.session',
    amount_subtotal: total,
    amount_total: total,
    cancel_url: params.cancel_url ?? null,
    client_reference_id: params.client_reference_id ?? null,
    created,
    currency: lineItems[0]!.currency,
    customer_email: params.customer_email ?? null,
    // Stripe's default lifetime of a checkout session is 24 hours.
    expires_at: params.expires_at ?? created + 24 * 3600,
    livemode: false,
    metadata: params.metadata ?? {},
    mode: 'payment',
    payment_intent: null,
    payment_status: 'unpaid',
    status: 'open',
    success_url: params.success_url,
    url: `${baseUrl}/checkout/${id}`,
  };
  return { session, lineItems };
}

/** Where the buyer lands after paying: Stripe substitutes the literal {CHECKOUT_SESSION_ID}. */
export function successRedirect(session: CheckoutSession): string {
  return session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', session.id);
}
