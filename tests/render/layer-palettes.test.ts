import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveProblem, stabilize } from '../../renderer/src/engine/index.js';
import { allTiles, backgroundFromLattice, createFolderSink, decodePngRgba, renderPyramid, type PyramidResult, type RenderInput } from '../../renderer/src/render/index.js';
import { hexToRgba, heightColour, LAYERS, PALETTES, sampleRamp, viewLegendSchema, type Layer, type Palette, type Rgba, type UntoppledStyle } from '../../shared/palettes.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { sameColour, tempDir } from './helpers.js';

/**
 * Every layer in every palette, drawn from a real engine outcome on a random background, checked
 * pixel for pixel at the deepest level against the arrays through the colour rules written in the
 * header of shared/palettes.ts (recomputed here, not through the renderer's own index tables), and
 * every legend.json against the palette definitions.
 */

const PPC = 2;
let dir: string;
let outcome: RenderInput;
let bg: Int32Array;
let width: number;
let height: number;
const results = new Map<string, PyramidResult>();
const keyOf = (layer: Layer, palette: string, untoppled: UntoppledStyle) => `${layer}/${palette}/${untoppled}`;

beforeAll(async () => {
  dir = await tempDir('layer-palettes');
  // random i.i.d. background with heights 0..2: mean 1 ≤ 2d − 2, so compact (arXiv:0901.3805)
  const problem = resolveProblem(runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 120, background: { kind: 'random', seed: 5, weights: [1, 1, 1] } }));
  outcome = await stabilize(problem);
  [height, width] = outcome.shape as [number, number];
  bg = new Int32Array(width * height);
  const background = backgroundFromLattice(problem.background.heightAt, outcome);
  background({ x: 0, y: 0, width, height }, bg);
  const sink = createFolderSink(dir);
  for (const palette of PALETTES)
    for (const layer of LAYERS)
      for (const untoppled of ['neutral', 'transparent'] as const) {
        if (untoppled === 'transparent' && (layer === 'heights' || layer === 'difference')) continue;
        const res = await renderPyramid(outcome, sink, { runId: 'lp', style: { layer, palette: palette.id, untoppled }, background, pixelsPerCell: PPC, concurrency: 4 });
        results.set(keyOf(layer, palette.id, untoppled), res);
      }
}, 60_000);
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** The colour a cell must have, from the arrays and the palette definition alone. */
function expectedColour(p: Palette, layer: Layer, untoppled: UntoppledStyle, i: number, scale: { maxH: number; m: number; maxU: number }): Rgba {
  const masked: Rgba = untoppled === 'transparent' ? [0, 0, 0, 0] : hexToRgba(p.neutral);
  const h = outcome.heights[i]!;
  const u = outcome.odometer[i]!;
  switch (layer) {
    case 'heights':
      return p.spreadHeights ? sampleRamp(p.ramp, h / scale.maxH) : hexToRgba(p.heights[h]!);
    case 'toppled':
      return u === 0 ? masked : p.spreadHeights ? sampleRamp(p.ramp, h / scale.maxH) : hexToRgba(p.heights[h]!);
    case 'difference':
      // 2m + 1 ≤ 255 levels here, so difference d sits at (d + m) / 2m along the diverging ramp
      return sampleRamp(p.diverging, (h - bg[i]! + scale.m) / (2 * scale.m));
    case 'odometer':
      return u === 0 ? masked : sampleRamp(p.ramp, Math.round(254 * (Math.log1p(u) / Math.log1p(scale.maxU))) / 254);
  }
}

function scaleOfArrays() {
  let maxH = 0;
  let m = 1;
  let maxU = 0;
  for (let i = 0; i < width * height; i++) {
    maxH = Math.max(maxH, outcome.heights[i]!);
    m = Math.max(m, Math.abs(outcome.heights[i]! - bg[i]!));
    maxU = Math.max(maxU, outcome.odometer[i]!);
  }
  return { maxH, m, maxU };
}

describe('each layer × palette at the deepest level', () => {
  for (const palette of PALETTES)
    for (const layer of LAYERS)
      for (const untoppled of ['neutral', 'transparent'] as const) {
        if (untoppled === 'transparent' && (layer === 'heights' || layer === 'difference')) continue;
        it(`${layer} in ${palette.id}, untoppled ${untoppled}: every ${PPC}×${PPC} block is its cell's colour`, async () => {
          const res = results.get(keyOf(layer, palette.id, untoppled))!;
          expect(res.plan.pixelsPerCell).toBe(PPC);
          const scale = scaleOfArrays();
          // the test is only meaningful if the pile has both toppled and untoppled cells
          expect(outcome.toppled.some((t) => t === 0) && outcome.toppled.some((t) => t === 1)).toBe(true);
          for (const t of [...allTiles(res.plan)].filter((q) => q.level === 0)) {
            const { data, width: tw, height: th } = await decodePngRgba(await readFile(join(dir, res.prefix, 'iiif', t.path)));
            for (let py = 0; py < th; py++)
              for (let px = 0; px < tw; px++) {
                const cell = Math.floor((t.y + py) / PPC) * width + Math.floor((t.x + px) / PPC);
                const want = expectedColour(palette, layer, untoppled, cell, scale);
                if (!sameColour(data, py * tw + px, want)) throw new Error(`${t.path} pixel ${px},${py} (cell ${cell}) is ${[...data.subarray(4 * (py * tw + px), 4 * (py * tw + px) + 4)]}, expected ${want}`);
              }
          }
        });
      }
});

describe('legend.json beside each pyramid', () => {
  it('lists every height with the palette table colour (or the spread grey), and the untoppled look', async () => {
    for (const p of PALETTES) {
      for (const untoppled of ['neutral', 'transparent'] as const) {
        const res = results.get(keyOf('toppled', p.id, untoppled))!;
        const stored = viewLegendSchema.parse(JSON.parse(await readFile(join(dir, res.legendKey), 'utf8')));
        expect(stored.style).toEqual({ layer: 'toppled', palette: p.id, untoppled });
        if (stored.legend.kind !== 'discrete') throw new Error('heights legends are discrete');
        const maxH = stored.stats.maxHeight;
        const heights = stored.legend.entries.filter((e) => e.value !== null);
        expect(heights.map((e) => e.value)).toEqual(Array.from({ length: maxH + 1 }, (_, h) => h));
        for (const e of heights) expect(e.colour).toBe(p.spreadHeights ? toHex(heightColour(p, e.value!, maxH)) : p.heights[e.value!]);
        const masked = stored.legend.entries.find((e) => e.value === null)!;
        expect(masked).toEqual(untoppled === 'transparent' ? { label: 'not toppled', colour: 'transparent', value: null, transparent: true } : { label: 'not toppled', colour: p.neutral, value: null });
      }
    }
  });

  it('gives the difference one entry per value along the diverging ramp, centred on zero', async () => {
    const { m } = scaleOfArrays();
    for (const p of PALETTES) {
      const stored = viewLegendSchema.parse(JSON.parse(await readFile(join(dir, results.get(keyOf('difference', p.id, 'neutral'))!.legendKey), 'utf8')));
      if (stored.legend.kind !== 'discrete') throw new Error('a small difference range is discrete');
      expect(stored.legend.entries.map((e) => e.value)).toEqual(Array.from({ length: 2 * m + 1 }, (_, i) => i - m));
      // the ends and the centre of the palette's diverging ramp, as defined
      expect(stored.legend.entries[0]!.colour).toBe(p.diverging[0]);
      expect(stored.legend.entries[m]!.colour).toBe(p.diverging[(p.diverging.length - 1) / 2]);
      expect(stored.legend.entries.at(-1)!.colour).toBe(p.diverging.at(-1));
      expect(stored.legend.entries[m]!.label).toBe('0');
    }
  });

  it('labels the odometer ramp from 1 to the largest count, log-spaced, with the ramp ends of the palette', async () => {
    const { maxU } = scaleOfArrays();
    for (const p of PALETTES) {
      const stored = viewLegendSchema.parse(JSON.parse(await readFile(join(dir, results.get(keyOf('odometer', p.id, 'neutral'))!.legendKey), 'utf8')));
      if (stored.legend.kind !== 'continuous') throw new Error('the odometer legend is a ramp');
      expect(stored.legend.scale).toBe('log1p');
      expect(stored.stats.maxOdometer).toBe(maxU);
      const values = stored.legend.stops.map((s) => s.value);
      expect(values[0]).toBe(1);
      expect(values.at(-1)).toBe(maxU);
      expect(stored.legend.stops.at(-1)!.colour).toBe(p.ramp.at(-1));
      // positions are log(1 + u) / log(1 + u_max) (the index rule of shared/palettes.ts)
      for (const s of stored.legend.stops) expect(s.position).toBeCloseTo(Math.log1p(s.value!) / Math.log1p(maxU), 12);
      expect(stored.legend.masked).toEqual({ label: 'not toppled', colour: p.neutral, value: null });
    }
  });
});

const toHex = (c: Rgba) => `#${[c[0], c[1], c[2]].map((x) => x.toString(16).padStart(2, '0')).join('')}`;
