import { describe, expect, test } from 'vitest';
import { runSpecSchema } from '../../../shared/run-spec.js';
import { viewPrefix } from '../../../renderer/src/render/keys.js';
import { drawnOf, paletteOfSegment, paletteSegmentOf, pickLayer, pickPalette } from './drawnViews.js';

describe('the views a run has', () => {
  test('a specification without a drawing choice has the three default layers in tidewater', () => {
    const spec = runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 10 });
    expect(drawnOf(spec)).toEqual({ layers: ['heights', 'toppled', 'odometer'], palettes: ['tidewater'], untoppled: 'neutral' });
  });

  test('switchers fall back to what was drawn', () => {
    const render = { layers: ['odometer' as const, 'difference' as const], palettes: ['kiln' as const, 'newsprint' as const], untoppled: 'transparent' as const };
    expect(pickLayer(render, 'heights')).toBe('odometer');
    expect(pickLayer(render, 'difference')).toBe('difference');
    expect(pickLayer(render, null)).toBe('odometer');
    expect(pickPalette(render, 'tidewater')).toBe('kiln');
    expect(pickPalette(render, 'newsprint')).toBe('newsprint');
  });

  test('addresses follow the renderer key layout: ~clear only on layers with untoppled cells', () => {
    const render = { layers: ['heights' as const, 'odometer' as const], palettes: ['lichen' as const], untoppled: 'transparent' as const };
    // the address segment must be what renderer/src/render/keys.ts writes for that style
    expect(`runs/r/odometer/${paletteSegmentOf(render, 'odometer', 'lichen')}`).toBe(viewPrefix('r', 'odometer', 'lichen', true));
    expect(`runs/r/heights/${paletteSegmentOf(render, 'heights', 'lichen')}`).toBe(viewPrefix('r', 'heights', 'lichen', false));
    expect(paletteOfSegment('lichen~clear')).toBe('lichen');
  });
});
