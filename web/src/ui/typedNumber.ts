/**
 * The number a field's text means, or null while it means none yet: "" and "-" on the way to "-120"
 * (a browser's number input reports "-" as ""), or anything that is not a finite number.
 * @example typedNumber('-12', true) // -12
 */
export function typedNumber(text: string, round = false): number | null {
  const t = text.trim();
  if (t === '' || t === '-' || t === '+') return null;
  const n = Number(t);
  if (!Number.isFinite(n)) return null;
  return round ? Math.round(n) : n;
}
