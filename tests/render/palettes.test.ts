import { describe, expect, it } from 'vitest';
import {
  differenceCiede2000,
  filterDeficiencyDeuter,
  filterDeficiencyProt,
  filterDeficiencyTrit,
  converter,
  parse,
  wcagContrast,
  wcagLuminance,
  type Color,
} from 'culori';
import {
  colourTable,
  DEFAULT_PALETTE_ID,
  differenceIndex,
  differenceScale,
  heightColour,
  layerStyleSchema,
  legendFor,
  odometerIndex,
  paletteById,
  PALETTES,
  rgbaToHex,
  sampleRamp,
  type LayerStats,
} from '../../shared/palettes.js';

const dE = differenceCiede2000();
const lab = converter('lab65');
// Dichromat simulation at full severity: culori's filterDeficiency* implement the matrices of
// Machado, Oliveira & Fernandes, "A Physiologically-based Model for Simulation of Color Vision
// Deficiency", IEEE TVCG 15(6), 2009 (cited in culori's src/deficiency.js).
const simulate = (f: (c: Color) => Color) => (hex: string): Color => f(parse(hex)!);
const visions = {
  normal: simulate((c) => c),
  protanopia: simulate(filterDeficiencyProt(1)),
  deuteranopia: simulate(filterDeficiencyDeuter(1)),
  tritanopia: simulate(filterDeficiencyTrit(1)),
} as const;

const stats = (maxHeight: number, extra: Partial<LayerStats> = {}): LayerStats => ({
  cells: 100,
  minHeight: 0,
  maxHeight,
  heightCounts: Array.from({ length: maxHeight + 1 }, () => 1),
  toppledCells: 50,
  maxOdometer: 1000,
  ...extra,
});

describe('palette data', () => {
  it('has several colour maps, a colour-blind-safe default and a grayscale print map', () => {
    expect(PALETTES.length).toBeGreaterThanOrEqual(4);
    const def = paletteById(DEFAULT_PALETTE_ID);
    expect(def.colourBlindSafe).toBe(true);
    expect(def.grayscale).toBe(false);
    expect(PALETTES.some((p) => p.grayscale)).toBe(true);
    for (const p of PALETTES) {
      expect(p.heights.length).toBeGreaterThanOrEqual(8);
      expect(p.diverging.length % 2).toBe(1);
    }
    expect(new Set(PALETTES.map((p) => p.id)).size).toBe(PALETTES.length);
  });

  it('rejects unknown palettes and styles with a clear message', () => {
    expect(() => paletteById('nope')).toThrow(/unknown palette "nope"/);
    const r = layerStyleSchema.safeParse({ palette: 'nope' });
    expect(r.success).toBe(false);
    expect(layerStyleSchema.parse({})).toEqual({ layer: 'heights', palette: 'tidewater', untoppled: 'neutral' });
  });
});

describe('colour-blind-safe palettes', () => {
  // ΔE2000 ≈ 1 is a just-noticeable difference (from memory: Sharma, Wu & Dalal 2005 discuss the
  // CIEDE2000 scale); 15 is our own design margin so heights stay apart at a glance.
  const MARGIN = 15;
  for (const p of PALETTES.filter((q) => q.colourBlindSafe && !q.grayscale)) {
    for (const [vision, sim] of Object.entries(visions)) {
      it(`${p.id}: heights 0..7 and the neutral colour stay apart under ${vision}`, () => {
        const colours = [...p.heights.slice(0, 8), p.neutral].map((c) => sim(c));
        let min = Infinity;
        for (let i = 0; i < colours.length; i++) for (let j = i + 1; j < colours.length; j++) min = Math.min(min, dE(colours[i], colours[j]));
        expect(min).toBeGreaterThan(MARGIN);
      });
      it(`${p.id}: the two sides of the difference ramp stay apart under ${vision}`, () => {
        for (const t of [0.125, 0.25, 0.375, 0.5]) {
          const neg = rgbaToHex(sampleRamp(p.diverging, 0.5 - t));
          const pos = rgbaToHex(sampleRamp(p.diverging, 0.5 + t));
          expect(dE(sim(neg), sim(pos))).toBeGreaterThan(t >= 0.25 ? MARGIN : 8);
        }
      });
    }
  }

  it('every sequential ramp is monotone in lightness (CIELAB L*), so order reads without hue', () => {
    for (const p of PALETTES) {
      const ls = Array.from({ length: 65 }, (_, i) => lab(rgbaToHex(sampleRamp(p.ramp, i / 64)))!.l);
      const dir = Math.sign(ls[64] - ls[0]);
      for (let i = 1; i < ls.length; i++) expect(Math.sign(ls[i] - ls[i - 1]) * dir).toBeGreaterThanOrEqual(0);
    }
  });
});

describe('grayscale print palette', () => {
  const gray = PALETTES.filter((p) => p.grayscale);
  it('uses pure greys whose WCAG relative luminance falls with height, for any largest height', () => {
    // relative luminance and contrast ratio as defined in WCAG 2.1 (w3.org/TR/WCAG21/#dfn-relative-luminance),
    // computed by culori's wcagLuminance / wcagContrast
    for (const p of gray) {
      for (let maxH = 1; maxH <= 7; maxH++) {
        const cs = Array.from({ length: maxH + 1 }, (_, h) => rgbaToHex(heightColour(p, h, maxH)));
        for (const c of cs) expect(c.slice(1, 3)).toBe(c.slice(3, 5));
        for (const c of cs) expect(c.slice(3, 5)).toBe(c.slice(5, 7));
        for (let h = 1; h <= maxH; h++) {
          expect(wcagLuminance(cs[h])).toBeLessThan(wcagLuminance(cs[h - 1]));
          // neighbours differ clearly: at least 1.25:1 even with 8 heights, far more with 4
          expect(wcagContrast(cs[h], cs[h - 1])).toBeGreaterThan(maxH <= 3 ? 2 : 1.25);
        }
        // height 0 is not the paper colour, so a height-0 site differs from an untoppled one
        expect(wcagContrast(cs[0], p.neutral)).toBeGreaterThan(1.1);
      }
    }
  });
});

describe('index mappings and legends', () => {
  it('odometer indices follow log(1+u)/log(1+u_max) on 1..255', () => {
    expect(odometerIndex(0, 1000)).toBe(0);
    expect(odometerIndex(1000, 1000)).toBe(255);
    // log(1+31)/log(1+1023) = 5/10 exactly: halfway up the ramp (arithmetic)
    expect(odometerIndex(31, 1023)).toBe(1 + 127);
    for (let u = 1; u < 1000; u++) expect(odometerIndex(u + 1, 1000)).toBeGreaterThanOrEqual(odometerIndex(u, 1000));
  });

  it('difference indices give each integer its own colour when the range is small', () => {
    const { m, levels } = differenceScale({ minDifference: -2, maxDifference: 3 });
    expect([m, levels]).toEqual([3, 7]);
    expect([-3, -2, -1, 0, 1, 2, 3].map((d) => differenceIndex(d, m, levels))).toEqual([1, 2, 3, 4, 5, 6, 7]);
    const wide = differenceScale({ minDifference: -1000, maxDifference: 10 });
    expect(wide.levels).toBe(255);
    expect(differenceIndex(-1000, wide.m, wide.levels)).toBe(1);
    expect(differenceIndex(0, wide.m, wide.levels)).toBe(128);
    expect(differenceIndex(1000, wide.m, wide.levels)).toBe(255);
  });

  it('the heights legend lists every height with the colour the tiles use', () => {
    const p = paletteById('tidewater');
    const s = stats(3);
    const table = colourTable(p, 'heights', s, 'neutral');
    const legend = legendFor(p, 'heights', s);
    expect(legend.kind).toBe('discrete');
    if (legend.kind !== 'discrete') return;
    expect(legend.entries.map((e) => e.label)).toEqual(['0', '1', '2', '3']);
    expect(legend.entries.map((e) => e.colour)).toEqual(p.heights.slice(0, 4));
    expect(legend.entries.map((e) => e.colour)).toEqual(table.slice(1, 5).map(rgbaToHex));
  });

  it('the toppled legend names the untoppled style; transparent means alpha 0', () => {
    const p = paletteById('kiln');
    const l = legendFor(p, 'toppled', stats(3), 'transparent');
    if (l.kind !== 'discrete') throw new Error('expected a discrete legend');
    expect(l.entries.at(-1)).toMatchObject({ label: 'not toppled', transparent: true });
    expect(colourTable(p, 'toppled', stats(3), 'transparent')[0][3]).toBe(0);
    expect(rgbaToHex(colourTable(p, 'toppled', stats(3), 'neutral')[0])).toBe(p.neutral);
  });

  it('the odometer legend has log-spaced stops from 1 to the maximum', () => {
    const l = legendFor(paletteById('lichen'), 'odometer', stats(3, { maxOdometer: 5000 }));
    if (l.kind !== 'continuous') throw new Error('expected a continuous legend');
    expect(l.scale).toBe('log1p');
    expect(l.stops.map((s) => s.value)).toEqual([1, 10, 100, 1000, 5000]);
    expect(l.stops.at(-1)!.position).toBe(1);
    expect(l.stops[0].position).toBeCloseTo(Math.log(2) / Math.log(5001), 12);
  });

  it('heights beyond the table (degree > 8 lattices) still get colours from the ramp', () => {
    const p = paletteById('tidewater');
    const t = colourTable(p, 'heights', stats(20), 'neutral');
    expect(t).toHaveLength(22);
    expect(t[1 + 20]).toEqual(sampleRamp(p.ramp, 1));
  });
});
