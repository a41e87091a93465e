import type { LatticeView } from './cells.js';

/**
 * The place a viewer shows, written into its address as `at=<x>,<y>,<cells across>` in lattice
 * units of the main pane's run (relative to the origin, y down as in the array), so a copied link
 * opens at the same place whatever layer, palette or pyramid density it shows. Pure, so it is tested
 * without a browser.
 */

export const VIEW_PARAM = 'at';

/** Digits enough to put the centre within a thousandth of the view's width, and no more: short links. */
export function formatView(v: LatticeView): string {
  const decimals = Math.min(6, Math.max(0, Math.ceil(-Math.log10(v.across / 1000))));
  const num = (x: number) => {
    // trailing zeros go only after a decimal point: "100" stays 100, not 1, and 0 stays "0"
    const fixed = x.toFixed(decimals);
    const s = fixed.includes('.') ? fixed.replace(/\.?0+$/, '') : fixed;
    return s === '-0' ? '0' : s;
  };
  return `${num(v.cx)},${num(v.cy)},${Number(v.across.toPrecision(4))}`;
}

/** The view of an `at` value, or null when it is missing or not three finite numbers with a positive width. */
export function parseView(value: string | null | undefined): LatticeView | null {
  if (!value) return null;
  const parts = value.split(',');
  if (parts.length !== 3 || parts.some((p) => p.trim() === '')) return null;
  const [cx, cy, across] = parts.map(Number) as [number, number, number];
  if (![cx, cy, across].every(Number.isFinite) || across <= 0) return null;
  return { cx, cy, across };
}
