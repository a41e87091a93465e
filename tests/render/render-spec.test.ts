import { describe, expect, it } from 'vitest';
import { createSeriesRequestSchema } from '../../shared/api/series.js';
import { BYTES_PER_CELL, creditsFor, drawnPixelsPerCell, estimateRun, pyramidSeconds, RENDER_OVERHEAD_SECONDS, RENDER_PIXELS_PER_SECOND } from '../../shared/estimate.js';
import { defaultPixelsPerCell } from '../../renderer/src/render/index.js';
import { DEFAULT_RENDER, DIFFERENCE_NEEDS_BACKGROUND, renderViews, runSpecSchema, viewPaletteSegment, type RunSpecInput } from '../../shared/run-spec.js';

/** The `render` part of a run specification: what the farm draws, its validation messages, and its price. */

const base: RunSpecInput = { lattice: { preset: 'square' }, chips: 1000 };
const issues = (s: unknown) => {
  const r = runSpecSchema.safeParse(s);
  return r.success ? [] : r.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
};

describe('the drawing choice in a run spec', () => {
  it('is optional: a spec without it parses unchanged and means the three default views', () => {
    const spec = runSpecSchema.parse(base);
    expect(spec).toEqual({ lattice: { preset: 'square' }, chips: 1000, sources: [], background: { kind: 'constant', height: 0 } });
    expect(renderViews(spec)).toEqual([
      { layer: 'heights', palette: 'tidewater', untoppled: 'neutral' },
      { layer: 'toppled', palette: 'tidewater', untoppled: 'neutral' },
      { layer: 'odometer', palette: 'tidewater', untoppled: 'neutral' },
    ]);
    expect(DEFAULT_RENDER.layers).toEqual(['heights', 'toppled', 'odometer']);
  });

  it('lists layers × palettes, with see-through untoppled cells only on layers that have them', () => {
    const spec = runSpecSchema.parse({ ...base, background: { kind: 'constant', height: 1 }, render: { layers: ['heights', 'difference', 'odometer'], palettes: ['kiln', 'newsprint'], untoppled: 'transparent' } });
    const views = renderViews(spec);
    expect(views).toHaveLength(6);
    expect(views.map(viewPaletteSegment)).toEqual(['kiln', 'newsprint', 'kiln', 'newsprint', 'kiln~clear', 'newsprint~clear']);
  });

  it('refuses the difference layer on a background that is 0 everywhere, whatever its kind', () => {
    const zero = [
      { kind: 'constant', height: 0 },
      { kind: 'checkerboard', a: 0, b: 0 },
      { kind: 'annuli', a: 0, b: 0 },
      { kind: 'motif', cells: [[0, 0], [0, 0]] },
      { kind: 'random', seed: 1, weights: [3, 0, 0] },
    ];
    const render = { layers: ['difference'], palettes: ['tidewater'], untoppled: 'neutral' };
    for (const background of zero) expect(issues({ ...base, background, render })).toEqual([{ path: 'render.layers', message: DIFFERENCE_NEEDS_BACKGROUND }]);
    // and without a background at all (the default is the empty lattice)
    expect(issues({ ...base, render })).toEqual([{ path: 'render.layers', message: DIFFERENCE_NEEDS_BACKGROUND }]);
    const nonZero = [
      { kind: 'constant', height: 2 },
      { kind: 'checkerboard', a: 1, b: 0 },
      { kind: 'motif', cells: [[0, 1]] },
      { kind: 'random', seed: 1, weights: [1, 1] },
      { kind: 'array', sha256: 'b'.repeat(64), shape: [3, 3] },
    ];
    for (const background of nonZero) expect(issues({ ...base, background, render })).toEqual([]);
  });

  it('says clearly what else is wrong with a choice', () => {
    const r = (render: unknown) => issues({ ...base, background: { kind: 'constant', height: 1 }, render });
    expect(r({ layers: [], palettes: ['kiln'], untoppled: 'neutral' })).toEqual([{ path: 'render.layers', message: 'choose at least one layer to draw' }]);
    expect(r({ layers: ['heights'], palettes: [], untoppled: 'neutral' })).toEqual([{ path: 'render.palettes', message: 'choose at least one palette' }]);
    expect(r({ layers: ['heights', 'heights'], palettes: ['kiln'], untoppled: 'neutral' })).toEqual([{ path: 'render.layers', message: 'each layer may be chosen once' }]);
    expect(r({ layers: ['heights'], palettes: ['kiln', 'kiln'], untoppled: 'neutral' })).toEqual([{ path: 'render.palettes', message: 'each palette may be chosen once' }]);
    expect(r({ layers: ['sideways'], palettes: ['kiln'], untoppled: 'neutral' })[0]).toMatchObject({ path: 'render.layers.0' });
    expect(r({ layers: ['heights'], palettes: ['rainbow'], untoppled: 'neutral' })[0]).toMatchObject({ path: 'render.palettes.0' });
    expect(r({ layers: ['heights'], palettes: ['kiln'], untoppled: 'invisible' })[0]).toMatchObject({ path: 'render.untoppled' });
    expect(r({ layers: ['heights'], palettes: ['kiln'], untoppled: 'neutral', extra: 1 })[0]).toMatchObject({ path: 'render' });
  });

  it('applies the same rule to a series', () => {
    const r = createSeriesRequestSchema.safeParse({
      labId: '00000000-0000-4000-8000-000000000000',
      title: 'series',
      spec: { lattice: { preset: 'square' }, render: { layers: ['difference'], palettes: ['kiln'], untoppled: 'neutral' } },
      chips: [100, 400],
    });
    expect(r.success).toBe(false);
    expect(r.error!.issues[0]).toMatchObject({ path: ['spec', 'render', 'layers'], message: DIFFERENCE_NEEDS_BACKGROUND });
  });
});

describe('the estimator counts the pyramids asked for', () => {
  const est = (render?: unknown) => estimateRun(runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 1e6, background: { kind: 'constant', height: 1 }, ...(render ? { render } : {}) }));

  it('uses the renderer\'s own pixels-per-cell rule', () => {
    for (const [w, hh] of [[1, 1], [5, 5], [300, 700], [1023, 2], [1024, 1], [5000, 4000]]) expect(drawnPixelsPerCell(w!, hh!)).toBe(defaultPixelsPerCell(w!, hh!));
  });

  it('prices drawing by layers × palettes, each at its pixels over the measured rate', () => {
    const one = est({ layers: ['heights'], palettes: ['kiln'], untoppled: 'neutral' });
    const six = est({ layers: ['heights', 'difference', 'odometer'], palettes: ['kiln', 'lichen'], untoppled: 'neutral' });
    const def = est();
    expect([one.pyramids, six.pyramids, def.pyramids]).toEqual([1, 6, 3]);
    const [side] = one.shape as [number];
    const k = defaultPixelsPerCell(side, side);
    expect(pyramidSeconds(one.shape)).toBeCloseTo(RENDER_OVERHEAD_SECONDS + (side * side * k * k) / RENDER_PIXELS_PER_SECOND, 9);
    expect(one.renderSeconds).toBeCloseTo(pyramidSeconds(one.shape), 9);
    expect(six.renderSeconds).toBeCloseTo(6 * one.renderSeconds, 9);
    // the rest of the estimate does not depend on what is drawn
    expect(six.seconds - six.renderSeconds).toBeCloseTo(one.seconds - one.renderSeconds, 6);
    expect(six.credits).toBe(creditsFor(six.seconds, six.bytes));
    expect(six.bytes).toBe(six.cells * BYTES_PER_CELL);
  });
});
