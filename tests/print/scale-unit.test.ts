import { describe, expect, it } from 'vitest';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { scaleBarText } from '../../shared/print-words.js';
import { layoutFigure } from '../../shared/print-layout.js';
import { naturalScale } from '../../shared/natural-scale.js';

/**
 * The rescaled scale bar of a print measures the pile's own length n^(1/d): n on the line, √n on the
 * plane, ∛n on the cubic lattice (the toppled region holds about n sites), in glyphs Work Sans has.
 */
describe('rescaled scale bar', () => {
  it('names n^(1/d) by the dimension', () => {
    expect(scaleBarText('rescaled', 0.1, 100, 2)).toBe('0.1 · n½ = 100 cells');
    expect(scaleBarText('rescaled', 0.1, 5, 3)).toBe('0.1 · n¹⁄³ = 5 cells');
    expect(scaleBarText('rescaled', 0.1, 100, 1)).toBe('0.1 · n = 100 cells');
  });

  it('n^(1/d) is exact on perfect powers', () => {
    expect(naturalScale(1_000_000, 2)).toBe(1000);
    expect(naturalScale(1_000_000, 3)).toBe(100);
    expect(naturalScale(1_000_000, 1)).toBe(1_000_000);
    expect(naturalScale(0, 3)).toBe(0);
  });

  it('a cubic run of 10⁶ grains gets a bar of 0.1 · ∛n = 10 cells, not 0.1 · √n = 100', () => {
    const spec = figureSpecSchema.parse({ size: { kind: 'column', column: 'single' }, panels: [{ runId: 'c' }], scaleBar: { unit: 'rescaled', length: 0.1 } });
    const layout = layoutFigure(spec, [{ runId: 'c', shape: [201, 201, 201], origin: [100, 100, 100], chips: 1_000_000 }]);
    const bar = layout.panels[0]!.scaleBar!;
    expect(bar.cells).toBeCloseTo(10, 9);
    expect(bar.text).toBe('0.1 · n¹⁄³ = 10 cells');
  });
});
