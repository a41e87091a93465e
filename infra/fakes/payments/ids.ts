import { randomBytes } from 'node:crypto';

const ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789';

/** A Stripe-style object id: prefix + 24 random base-62 characters, e.g. `cs_test_a1B2...`. */
export function newId(prefix: string): string {
  const bytes = randomBytes(24);
  let out = '';
  for (const b of bytes) out += ALPHABET[b % ALPHABET.length];
  return `${prefix}_${out}`;
}

export function nowSeconds(): number {
  return Math.floor(Date.now() / 1000);
}
