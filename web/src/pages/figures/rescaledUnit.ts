import { scaleSymbol } from '../../../../shared/natural-scale.js';

/**
 * How the composer names the rescaled unit of a figure's panels: a pile's radius grows like n^(1/d)
 * (shared/natural-scale.ts), so the unit is x/n, x/√n or x/∛n by the panels' dimension, and panels
 * of different dimensions are each rescaled by their own, which the name must say. Pure.
 */
export function rescaledUnitName(dimensions: readonly number[]): string {
  const distinct = [...new Set(dimensions)].sort((a, b) => a - b);
  if (distinct.length === 0) return 'x/n^(1/d)';
  if (distinct.length === 1) return `x/${scaleSymbol(distinct[0]!)}`;
  return `x/n^(1/d), each panel by its own d (${distinct.map((d) => `${d}-D`).join(' and ')} runs mixed)`;
}
