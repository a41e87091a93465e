/**
 * Exact counts written for people: thousands grouped, large counts also as a power of ten with a
 * real superscript. Shared so the web pages and the API's generated titles (series runs) write them
 * alike; pure functions, so the same rules hold in tables, headings, titles and tests.
 */

const grouped = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0, useGrouping: true });

/** 1234567 -> "1,234,567". Integers only; bigint keeps counts beyond 2^53 exact. */
export function groupThousands(n: number | bigint): string {
  if (typeof n === 'number' && !Number.isFinite(n)) return String(n);
  return grouped.format(n);
}

/** "1 grain", "2 grains": units are always named. */
export function withUnit(n: number | bigint, singular: string, plural = `${singular}s`): string {
  return `${groupThousands(n)} ${n === 1 || n === 1n ? singular : plural}`;
}

export interface PowerOfTen {
  /** decimal mantissa, e.g. "2.5"; "1" for an exact power of ten; three significant digits at most */
  mantissa: string;
  exponent: number;
  /** the mantissa is rounded (the count has more than three significant digits): shown as "≈ 6.42 × 10⁵" */
  approximate: boolean;
}

/**
 * Scientific form, there to show scale at a glance beside the exact count: written from the integer's
 * digits, exactly when they end in zeros after the third (1000000 -> "1" × 10^6, 2500000 -> "2.5" ×
 * 10^6), else rounded to three significant digits and marked approximate (641601 -> ≈ "6.42" × 10^5;
 * 99960 -> ≈ "1" × 10^5), since "6.41601 × 10⁵" only repeats the count.
 * Returns null for |n| < 1000, where the plain number says it all.
 */
export function powerOfTen(n: number | bigint): PowerOfTen | null {
  if (typeof n === 'number' && (!Number.isInteger(n))) return null;
  const negative = n < 0;
  const sign = negative ? '-' : '';
  const digits = (negative ? -BigInt(n) : BigInt(n)).toString();
  if (digits.length < 4) return null;
  let exponent = digits.length - 1;
  const rest = digits.slice(1).replace(/0+$/, '');
  if (rest.length <= 2) return { mantissa: sign + digits[0] + (rest ? `.${rest}` : ''), exponent, approximate: false };
  // half up on the decimal digits themselves (a double would round 1.235 down)
  let lead = Number(digits.slice(0, 3)) + (Number(digits[3]) >= 5 ? 1 : 0);
  if (lead === 1000) {
    lead = 100;
    exponent += 1;
  }
  return { mantissa: sign + String(lead / 100), exponent, approximate: true };
}

const SUPERSCRIPT_DIGITS = '⁰¹²³⁴⁵⁶⁷⁸⁹';

/** 6 -> "⁶", -12 -> "⁻¹²": exponents where markup cannot go (SVG ticks, option labels, tooltips). */
export function superscriptDigits(k: number): string {
  return String(k).replace(/\d/g, (d) => SUPERSCRIPT_DIGITS[Number(d)]!).replace('-', '⁻');
}

/** "10⁶", or "2.5 × 10⁶" when the mantissa is not 1. */
function tenPowerText(mantissa: string | number, exponent: number): string {
  const power = `10${superscriptDigits(exponent)}`;
  return String(mantissa) === '1' ? power : `${mantissa} × ${power}`;
}

/**
 * Plain-text form, e.g. "1,000,000 (10⁶)" or "2,500,000 (2.5 × 10⁶)", for titles and copy; in markup
 * `ui/Count` writes the same with a <sup>. Both superscript, so no page reads "10^6".
 */
export function formatCountText(n: number | bigint): string {
  const p = powerOfTen(n);
  if (!p) return groupThousands(n);
  return `${groupThousands(n)} (${p.approximate ? '≈ ' : ''}${tenPowerText(p.mantissa, p.exponent)})`;
}

/**
 * "n = 10⁶" for powers of ten, "n = 40,000" otherwise: the grain count in titles a reader can scan
 * (the API's series runs, the composer's suggested figure title), with the pages' superscripts.
 */
export function chipsLabel(n: number): string {
  const p = powerOfTen(n);
  return p && p.mantissa === '1' && !p.approximate ? `n = ${tenPowerText(1, p.exponent)}` : `n = ${groupThousands(n)}`;
}

const compact = new Intl.NumberFormat('en-US', { notation: 'compact', maximumSignificantDigits: 3 });

/**
 * The short form of a count where room is scarce (legend ticks), in one style: from 1000 up as "10K",
 * "94K" or "1.07M" (three significant digits), smaller ones as they are. A leading sign is kept
 * ("+1.5K"). Fonts without the superscripts 4–9 (the print's Latin Work Sans) need this style.
 */
export function compactCount(n: number, signed = false): string {
  const sign = n < 0 ? '−' : signed && n > 0 ? '+' : '';
  const a = Math.abs(n);
  if (!Number.isInteger(a) || a < 1000) return `${sign}${a}`;
  return `${sign}${compact.format(a)}`;
}

/**
 * The short form of a count as a power of ten, in one style for every count from 1 up: "10⁰", "10³",
 * "2.74 × 10⁴" (three significant digits). For labels of a logarithmic scale, whose stops are powers
 * of ten; 0 and fractions are written as they are.
 */
export function tenPowerCount(n: number, signed = false): string {
  const sign = n < 0 ? '−' : signed && n > 0 ? '+' : '';
  const a = Math.abs(n);
  if (!Number.isInteger(a) || a < 1) return `${sign}${a}`;
  let exponent = BigInt(a).toString().length - 1;
  let mantissa = Number((a / 10 ** exponent).toPrecision(3));
  // 99,960 rounds to 10.0 × 10⁴: that is 10⁵
  if (mantissa >= 10) {
    mantissa /= 10;
    exponent += 1;
  }
  return `${sign}${tenPowerText(mantissa, exponent)}`;
}
