/**
 * Test cards understood by the hosted checkout page, numbers as in Stripe's testing docs:
 * 4242 4242 4242 4242 pays, 4000 0000 0000 0002 is declined, 4000 0000 0000 9995 is declined for
 * insufficient funds. Any other number is refused before it reaches the "bank".
 */
export type CardOutcome =
  | { kind: 'paid'; brand: string; last4: string }
  | { kind: 'declined'; last4: string; declineCode: string; message: string }
  | { kind: 'invalid'; message: string };

const DECLINES: Record<string, { declineCode: string; message: string }> = {
  '4000000000000002': { declineCode: 'generic_decline', message: 'Your card was declined.' },
  '4000000000009995': { declineCode: 'insufficient_funds', message: 'Your card has insufficient funds.' },
};

/** Luhn checksum (ISO/IEC 7812-1), the check digit rule of every payment card number. */
export function luhnValid(digits: string): boolean {
  let sum = 0;
  for (let i = 0; i < digits.length; i++) {
    let d = digits.charCodeAt(digits.length - 1 - i) - 48;
    if (i % 2 === 1) {
      d *= 2;
      if (d > 9) d -= 9;
    }
    sum += d;
  }
  return sum % 10 === 0;
}

export function cardOutcome(input: unknown): CardOutcome {
  const digits = typeof input === 'string' ? input.replace(/[\s-]/g, '') : '';
  if (!/^\d{12,19}$/.test(digits)) return { kind: 'invalid', message: 'Enter a card number of 12 to 19 digits.' };
  if (!luhnValid(digits)) return { kind: 'invalid', message: 'That card number is not valid (check digit).' };
  const last4 = digits.slice(-4);
  if (digits === '4242424242424242') return { kind: 'paid', brand: 'visa', last4 };
  const decline = DECLINES[digits];
  if (decline) return { kind: 'declined', last4, ...decline };
  return { kind: 'invalid', message: 'This is a test checkout: use 4242 4242 4242 4242 (pays) or 4000 0000 0000 0002 (declined).' };
}
