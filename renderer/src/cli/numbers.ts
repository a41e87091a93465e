import { CliInputError } from './errors.js';

const MAX_SAFE = BigInt(Number.MAX_SAFE_INTEGER);

/**
 * A whole number from the command line: digits with optional '_' or ',' grouping, or a power-of-ten
 * shorthand such as 1e6 or 25e4. Anything else (sign, fraction, > 2^53 − 1) is refused by name.
 */
export function parseCount(flag: string, raw: string, { min = 0 }: { min?: number } = {}): number {
  const text = raw.trim();
  if (/^-/.test(text)) throw new CliInputError(`${flag} must be at least ${min}, got ${raw}`);
  let value: bigint;
  const plain = /^\d+(?:[_,]\d+)*$/.exec(text);
  const sci = /^(\d+)e(\d+)$/i.exec(text);
  if (plain) value = BigInt(text.replace(/[_,]/g, ''));
  else if (sci) value = BigInt(sci[1]!) * 10n ** BigInt(sci[2]!);
  else if (/^\+?\d*\.\d+(e[-+]?\d+)?$|^\d+e-\d+$/i.test(text)) throw new CliInputError(`${flag} must be a whole number, got ${raw}`);
  else throw new CliInputError(`${flag} must be a whole number, got '${raw}'`);
  if (value > MAX_SAFE) throw new CliInputError(`${flag} ${raw} is larger than 2^53 − 1 = 9007199254740991, the largest exact count`);
  if (value < BigInt(min)) throw new CliInputError(`${flag} must be at least ${min}, got ${raw}`);
  return Number(value);
}

/** A signed integer (coordinates, seeds). */
export function parseInteger(what: string, raw: string): number {
  const text = raw.trim();
  if (!/^[-+]?\d+$/.test(text)) throw new CliInputError(`${what} must be an integer, got '${raw}'`);
  const n = Number(text);
  if (!Number.isSafeInteger(n)) throw new CliInputError(`${what} is out of range: ${raw}`);
  return n;
}

/** A non-negative real (random weights). */
export function parseWeight(what: string, raw: string): number {
  const n = Number(raw.trim());
  if (raw.trim() === '' || !Number.isFinite(n) || n < 0) throw new CliInputError(`${what} must be a number ≥ 0, got '${raw}'`);
  return n;
}

/** 1234567 → "1,234,567"; counts may arrive as bigint or decimal strings. */
export function groupThousands(value: number | bigint | string): string {
  const s = typeof value === 'string' ? value : typeof value === 'bigint' ? value.toString() : String(value);
  const m = /^(-?)(\d+)(\.\d+)?$/.exec(s);
  if (!m) return s;
  return m[1] + m[2]!.replace(/\B(?=(\d{3})+(?!\d))/g, ',') + (m[3] ?? '');
}

/** n also as a power of ten, the way the product shows it: 1000000 → "10^6", 250000 → "10^5.40". */
export function powerOfTen(n: number): string {
  if (n <= 0) return n === 0 ? '0' : String(n);
  const exponent = Math.log10(n);
  const rounded = Math.round(exponent);
  if (10 ** rounded === n) return `10^${rounded}`;
  return `10^${exponent.toFixed(2)}`;
}
