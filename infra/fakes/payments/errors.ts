/** A Stripe-shaped API error: answered as `{ error: { type, message, param? } }` with `status`. */
export class StripeError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly type: 'invalid_request_error' | 'api_error' | 'card_error' = 'invalid_request_error',
    readonly param?: string,
    readonly code?: string,
  ) {
    super(message);
    this.name = 'StripeError';
  }

  toJSON() {
    return { error: { type: this.type, message: this.message, ...(this.param ? { param: this.param } : {}), ...(this.code ? { code: this.code } : {}) } };
  }
}

export const notFound = (what: string, id: string) =>
  new StripeError(404, `No such ${what}: '${id}'`, 'invalid_request_error', 'id', 'resource_missing');
