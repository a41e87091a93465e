import { compactCount, tenPowerCount } from './counts.js';

/**
 * Which labels of a colour ramp to write under it, and where, for a ramp of a given width: the web
 * legend card (CSS pixels, widths measured in the browser) and the printed legend row (points, widths
 * from the font files) both call this, so the screen and the print drop the same crowded ticks.
 * Pure, with text widths passed in.
 */

/** One labelled stop: where it sits along the ramp (0..1), its value and the label stored with the legend. */
export interface RampStop {
  position: number;
  label: string;
  value: number | null;
}

/** A label placed under the ramp: its left edge and width in the ramp's units. */
export interface PlacedTick {
  label: string;
  position: number;
  left: number;
  width: number;
}

/**
 * Labels centred under their stops, pulled inside the ramp at its two ends; a label closer than
 * `gap` to the one kept before it, or to the last one, is left out. The two ends of the scale are
 * always kept.
 */
export function placeTicks(stops: readonly { position: number; label: string }[], rampWidth: number, widthOf: (label: string) => number, gap: number): PlacedTick[] {
  const placed = stops.map((s) => {
    const width = widthOf(s.label);
    const left = Math.min(rampWidth - width, Math.max(0, s.position * rampWidth - width / 2));
    return { label: s.label, position: s.position, left, width };
  });
  if (placed.length <= 2) return placed;
  const last = placed[placed.length - 1]!;
  const kept: PlacedTick[] = [];
  let end = -Infinity;
  placed.forEach((t, i) => {
    const isEnd = i === 0 || i === placed.length - 1;
    if (!isEnd && (t.left < end + gap || t.left + t.width + gap > last.left)) return;
    kept.push(t);
    end = t.left + t.width;
  });
  return kept;
}

/** True when some label would be left out or two labels touch. */
function crowded(all: number, kept: readonly PlacedTick[], gap: number): boolean {
  if (kept.length < all) return true;
  return kept.some((t, i) => i > 0 && t.left < kept[i - 1]!.left + kept[i - 1]!.width + gap);
}

/**
 * How the labels of a crowded legend are shortened, one style for the whole legend (never "100, 10³,
 * 27.4K" side by side): a logarithmic scale as powers of ten ("10², 10³, 2.74 × 10⁴") where the type
 * has the superscripts, otherwise every count in the compact style ("100, 1K, 27.4K").
 */
export function shortLabels(scale: 'linear' | 'log1p', superscripts: boolean): (value: number, signed: boolean) => string {
  return scale === 'log1p' && superscripts ? tenPowerCount : compactCount;
}

/**
 * The ticks of a continuous legend on a ramp `rampWidth` wide: the stored labels (exact, grouped)
 * when they all fit apart, otherwise all of them in the short form `shorten` (see shortLabels),
 * leaving out the ticks that still collide.
 */
export function legendTicks(
  stops: readonly RampStop[],
  rampWidth: number,
  widthOf: (label: string) => number,
  gap: number,
  shorten: (value: number, signed: boolean) => string = compactCount,
): PlacedTick[] {
  const stored = placeTicks(stops, rampWidth, widthOf, gap);
  if (!crowded(stops.length, stored, gap)) return stored;
  const short = stops.map((s) => ({ position: s.position, label: s.value === null ? s.label : shorten(s.value, s.label.startsWith('+')) }));
  return placeTicks(short, rampWidth, widthOf, gap);
}
