/**
 * The natural length of a pile of n grains on a d-dimensional lattice: its toppled region holds about
 * n sites (the mean height is of order one), so its radius grows like n^(1/d): n on the line, √n on
 * the plane, ∛n on the cubic lattice. Rescaled coordinates, profiles and scale bars divide by this.
 * Pure, shared by the web pages and the print layout so both write and compute the same unit.
 */

/** n^(1/d); the dimension is the run's array rank (1, 2 or 3). Zero grains give 0. */
export function naturalScale(grains: number, dimension: number): number {
  if (!(grains > 0)) return 0;
  const d = Math.max(1, Math.round(dimension));
  // √ and ∛ are exact for perfect squares and cubes, where a plain power may miss by an ulp
  return d === 1 ? grains : d === 2 ? Math.sqrt(grains) : d === 3 ? Math.cbrt(grains) : grains ** (1 / d);
}

/** The unit as the web pages write it: "n", "√n", "∛n" (plain text, so it also fits SVG ticks and option labels). */
export function scaleSymbol(dimension: number): string {
  return dimension <= 1 ? 'n' : dimension === 2 ? '√n' : dimension === 3 ? '∛n' : `n^(1/${dimension})`;
}

/**
 * The unit as prints write it: Work Sans's Latin set has no radical signs, so the exponent is
 * written with the fraction glyphs it has ("n½", "n¹⁄³").
 */
export function printScaleSymbol(dimension: number): string {
  return dimension <= 1 ? 'n' : dimension === 2 ? 'n½' : dimension === 3 ? 'n¹⁄³' : `n^(1/${dimension})`;
}
