import { describe, expect, it } from 'vitest';
import { textWidthPt } from '../../renderer/src/print/fonts.js';
import { compactCount, tenPowerCount } from '../../shared/counts.js';
import { legendTicks, shortLabels, type PlacedTick } from '../../shared/legend-ticks.js';
import { legendFor, paletteById, type LayerStats } from '../../shared/palettes.js';
import { figureTextMarks, panelLegend, type TextMark } from '../../shared/print-marks.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { layoutFigure } from '../../shared/print-layout.js';

/**
 * Tick labels of continuous legends: the screen's legend card and the printed legend row choose them
 * with the same shared rule, so neither writes labels into one another ("1,00010,000100,000…").
 */

const stats = (maxOdometer: number): LayerStats => ({ cells: 100, minHeight: 0, maxHeight: 3, heightCounts: [25, 25, 25, 25], toppledCells: 80, maxOdometer });
const odometerLegend = (maxOdometer: number) => {
  const l = legendFor(paletteById('tidewater'), 'odometer', stats(maxOdometer));
  if (l.kind !== 'continuous') throw new Error('the odometer legend is a ramp');
  return l;
};

// about the width of a digit of 11 px Work Sans, the legend card's type
const perChar = (s: string) => s.length * 6.6;

function expectApart(ticks: readonly PlacedTick[], width: number, gap: number) {
  ticks.forEach((t, i) => {
    expect(t.left).toBeGreaterThanOrEqual(0);
    expect(t.left + t.width).toBeLessThanOrEqual(width + 1e-9);
    if (i > 0) expect(t.left).toBeGreaterThanOrEqual(ticks[i - 1]!.left + ticks[i - 1]!.width + gap - 1e-9);
  });
}

// the line with n = 2m grains at the origin: site x topples T(m − |x|) times, so the origin's count
// is the triangular number T(m) = m(m+1)/2 (OEIS A000217); n = 1000 gives T(500) = 125,250
const lineMax = (500 * 501) / 2;

describe('legend ticks', () => {
  it('keeps the stored labels when they all fit', () => {
    const l = odometerLegend(94_007);
    const ticks = legendTicks(l.stops, 400, perChar, 6);
    expect(ticks.map((t) => t.label)).toEqual(l.stops.map((s) => s.label));
    expectApart(ticks, 400, 6);
  });

  for (const max of [lineMax, 107_356, 12_345_678, 1_000_000_000]) {
    it(`writes short forms and leaves out what still collides on a 232 px ramp (largest count ${max})`, () => {
      const l = odometerLegend(max);
      const ticks = legendTicks(l.stops, 232, perChar, 6);
      expectApart(ticks, 232, 6);
      // both ends of the scale stay, the top one in its short form
      expect(ticks[0]!.label).toBe('1');
      expect(ticks.at(-1)!.label).toBe(compactCount(max));
      expect(ticks.length).toBeGreaterThanOrEqual(3);
      // no grouped long counts where room was short
      expect(ticks.every((t) => !t.label.includes(','))).toBe(true);
    });
  }

  it('compact short forms: every count from 1000 up to three figures with K, M, B', () => {
    expect(compactCount(10_000)).toBe('10K');
    expect(compactCount(1_000_000)).toBe('1M');
    expect(compactCount(107_356)).toBe('107K');
    expect(compactCount(1_073_456)).toBe('1.07M');
    expect(compactCount(999)).toBe('999');
    expect(compactCount(1500, true)).toBe('+1.5K');
    expect(compactCount(100_000)).toBe('100K');
  });

  it('power-of-ten short forms: every count from 1 up, with a superscript, to three figures', () => {
    expect([1, 10, 100, 1000, 10_000].map((n) => tenPowerCount(n))).toEqual(['10⁰', '10¹', '10²', '10³', '10⁴']);
    expect(tenPowerCount(27_384)).toBe('2.74 × 10⁴');
    expect(tenPowerCount(125_250)).toBe('1.25 × 10⁵');
    expect(tenPowerCount(27_000)).toBe('2.7 × 10⁴');
    // rounding up to the next power of ten is written as that power
    expect(tenPowerCount(99_960)).toBe('10⁵');
    expect(tenPowerCount(1_000_000_000_000)).toBe('10¹²');
    expect(tenPowerCount(0)).toBe('0');
    expect(tenPowerCount(1500, true)).toBe('+1.5 × 10³');
  });

  it('shortens a whole legend in one style: no "100, 10³, 27.4K" side by side', () => {
    // the tour's case: a largest count of 27,384 on the 232 px ramp of the viewer's legend card
    const l = odometerLegend(27_384);
    const screen = legendTicks(l.stops, 232, perChar, 6, shortLabels('log1p', true)).map((t) => t.label);
    expect(screen.every((t) => /^(\d(\.\d{1,2})? × )?10[⁰¹²³⁴⁵⁶⁷⁸⁹]+$/.test(t)), screen.join(', ')).toBe(true);
    expect(screen.at(-1)).toBe('2.74 × 10⁴');
    // the print's type has no superscripts beyond ³: every label compact instead
    const print = legendTicks(l.stops, 232, perChar, 6, shortLabels('log1p', false)).map((t) => t.label);
    expect(print.every((t) => /^(\d{1,3}|\d+(\.\d+)?K)$/.test(t)), print.join(', ')).toBe(true);
    expect(print.at(-1)).toBe('27.4K');
    // a linear scale (the difference layer) is never written in powers
    expect(shortLabels('linear', true)).toBe(compactCount);
  });
});

describe('printed legend row', () => {
  it('writes the odometer of a large run with ticks apart, in glyphs the print font has', () => {
    const spec = figureSpecSchema.parse({ size: { kind: 'column', column: 'single' }, panels: [{ runId: 'r', layer: 'odometer' }] });
    const layout = layoutFigure(spec, [{ runId: 'r', shape: [201, 201], origin: [100, 100], chips: 10_000_000 }]);
    const marks = figureTextMarks(layout, [panelLegend({ layer: 'odometer', palette: 'tidewater', untoppled: 'neutral' }, stats(12_345_678))], textWidthPt);
    const box = layout.legend!;
    const k = 72 / layout.dpi;
    // the tick line: the third line of the row, below the ramp
    const title = marks.find((m): m is TextMark => m.kind === 'text' && /topplings/i.test(m.text))!;
    const ticks = marks
      .filter((m): m is TextMark => m.kind === 'text' && m.y > title.y + 1 && m.y < box.y * k + box.height * k)
      .filter((m) => m.text !== 'not toppled')
      .sort((a, b) => a.x - b.x);
    expect(ticks.length).toBeGreaterThanOrEqual(3);
    ticks.forEach((t, i) => {
      if (i > 0) expect(t.x).toBeGreaterThan(ticks[i - 1]!.x + textWidthPt('regular', t.sizePt, ticks[i - 1]!.text));
      // Work Sans's Latin set has superscripts ¹ ² ³ only
      expect(t.text).not.toMatch(/[⁴-⁹⁰]/);
    });
  });
});
