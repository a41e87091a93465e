/**
 * The 2-D picture every view of a run draws (deep zoom, previews, series strips, prints): a planar
 * run's own array, one depth slice of a 3-D run, and for a 1-D run a band in which every cell is a
 * column many cells tall. A line pile drawn as its single row would be one pixel high at any size
 * where its whole length fits the screen or the page; as a band it keeps one column per cell, so it
 * stays exact, and reads at every zoom. Pure, shared by the renderer, the print layout, the
 * estimator and the viewer, so all of them agree on the geometry.
 */

/** A 1-D run's band is this many times longer than it is tall: readable at the whole-pile view. */
export const LINE_BAND_ASPECT = 8;

/**
 * The band never exceeds this many rows, so drawing it costs at most this many times one row of
 * tiles (about 16 tile rows at one pixel per cell); on the longest line piles the band is then
 * thinner than 1/8 of its length, still tens of screen pixels tall.
 */
export const LINE_BAND_MAX_ROWS = 4096;

/** Rows of the band a 1-D run of `cells` cells is drawn as (monotone in `cells`, at least 1). */
export function lineBandRows(cells: number): number {
  return Math.min(LINE_BAND_MAX_ROWS, Math.max(1, Math.ceil(cells / LINE_BAND_ASPECT)));
}

/** Columns and rows of cells of the drawn plane of a run whose array has this shape (x last). */
export function drawnPlaneSize(shape: readonly number[]): { width: number; height: number } {
  const width = shape[shape.length - 1] ?? 1;
  if (shape.length <= 1) return { width, height: lineBandRows(width) };
  return { width, height: shape[shape.length - 2]! };
}

/** What a view of a 3-D run shows, in words: "slice z = 0 of a 3-D pile" (z in lattice coordinates). */
export function sliceText(z: number): string {
  return `slice z = ${z < 0 ? `−${-z}` : z} of a 3-D pile`;
}

/** The slices of several views of one 3-D pile, in words: "slice z = 0 of a 3-D pile", "slices z = −1, 0 and 2 of a 3-D pile". */
export function slicesText(zs: readonly number[]): string {
  const distinct = [...new Set(zs)].sort((a, b) => a - b);
  if (distinct.length <= 1) return sliceText(distinct[0] ?? 0);
  const words = distinct.map((z) => (z < 0 ? `−${-z}` : String(z)));
  return `slices z = ${words.slice(0, -1).join(', ')} and ${words.at(-1)} of a 3-D pile`;
}
