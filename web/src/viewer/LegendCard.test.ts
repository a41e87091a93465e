import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { legendFor, paletteById } from '../../../shared/palettes.js';
import { LegendCard, RAMP_PX, tickWidth } from './LegendCard.js';

/** The tick labels the card writes, with their left edges in CSS pixels. */
function ticksOf(markup: string): { label: string; left: number }[] {
  const row = /data-testid="legend-ticks">(.*?)<\/div>/.exec(markup)?.[1] ?? '';
  return [...row.matchAll(/<span[^>]*style="left:\s*([\d.]+)px"[^>]*>([^<]*)<\/span>/g)].map((m) => ({ left: Number(m[1]), label: m[2]! }));
}

const odometer = (maxOdometer: number) =>
  legendFor(paletteById('tidewater'), 'odometer', { cells: 9, minHeight: 0, maxHeight: 3, heightCounts: [1, 2, 3, 3], toppledCells: 8, maxOdometer });

describe('legend card', () => {
  // 107,356 topplings at the origin: the triangular-lattice run whose last two ticks ran together
  for (const max of [94_007, 107_356, 1_234_567, 12_345_678]) {
    test(`odometer ticks up to ${max} stay apart and on the ramp`, () => {
      const ticks = ticksOf(renderToStaticMarkup(createElement(LegendCard, { legend: odometer(max) })));
      expect(ticks.length).toBeGreaterThanOrEqual(3);
      // one style for the whole legend: the exact labels stored with it, or every one a power of ten
      // (never "1, 10, 100, 10³, 27.4K")
      const exact = legendFor(paletteById('tidewater'), 'odometer', { cells: 9, minHeight: 0, maxHeight: 3, heightCounts: [1, 2, 3, 3], toppledCells: 8, maxOdometer: max });
      const stored = exact.kind === 'continuous' ? exact.stops.map((s) => s.label) : [];
      const allStored = ticks.every((t) => stored.includes(t.label));
      const allPowers = ticks.every((t) => /^(\d(\.\d{1,2})? × )?10[⁰¹²³⁴⁵⁶⁷⁸⁹]+$/.test(t.label));
      expect(allStored || allPowers, ticks.map((t) => t.label).join(', ')).toBe(true);
      expect(ticks[0]!.label).toBe(allStored ? '1' : '10⁰');
      ticks.forEach((t, i) => {
        expect(t.left).toBeGreaterThanOrEqual(0);
        expect(t.left + tickWidth(t.label)).toBeLessThanOrEqual(RAMP_PX + 0.1);
        if (i > 0) expect(t.left).toBeGreaterThan(ticks[i - 1]!.left + tickWidth(ticks[i - 1]!.label));
      });
    });
  }
});

describe('legend card styles', () => {
  test('a crowded odometer legend writes every tick as a power of ten, the top one rounded', () => {
    // 27,384 topplings at the most toppled site: the stored labels 1, 10, 100, 1,000, 10,000, 27,384 do not fit
    const ticks = ticksOf(renderToStaticMarkup(createElement(LegendCard, { legend: odometer(27_384) })));
    expect(ticks.map((t) => t.label).at(-1)).toBe('2.74 × 10⁴');
    expect(ticks.map((t) => t.label).every((l) => !/K|M|,/.test(l))).toBe(true);
  });

  test('a legend whose stored labels fit keeps them all, exact', () => {
    const ticks = ticksOf(renderToStaticMarkup(createElement(LegendCard, { legend: odometer(500), widthOf: (l: string) => l.length * 4 })));
    expect(ticks.map((t) => t.label)).toEqual(['1', '10', '100', '500']);
  });
});
