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
      expect(ticks[0]!.label).toBe('1');
      ticks.forEach((t, i) => {
        expect(t.left).toBeGreaterThanOrEqual(0);
        expect(t.left + tickWidth(t.label)).toBeLessThanOrEqual(RAMP_PX + 0.1);
        if (i > 0) expect(t.left).toBeGreaterThan(ticks[i - 1]!.left + tickWidth(ticks[i - 1]!.label));
      });
    });
  }
});
