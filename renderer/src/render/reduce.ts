/**
 * The rule that builds each coarser pyramid level from the next finer one.
 *
 * Every output pixel takes the most frequent palette index of its 2×2 block (fewer at odd right and
 * bottom edges). Ties, which include "all four different", go to the index that is rarer in the whole
 * layer, and between equally rare indices to the higher index (the higher height). Why: averaging
 * colours would invent colours that mean no height and would not fit a palette PNG; a plain mode lets
 * the dominant height of a region show, and sending ties to the rarer value keeps thin or sparse
 * structures (one-cell lines, isolated defects) visible a few levels further out than a fixed
 * preference would. The rule is applied level by level (iterated 2×2), so the whole pyramid costs
 * 4/3 of one pass over the cells.
 */

/**
 * priority[i] ranks index i for ties: a larger value wins. Built from a histogram of the layer:
 * rarer indices rank higher, equal counts rank by the higher index.
 */
export function tiePriority(counts: ArrayLike<number>): Uint8Array {
  const order = Array.from({ length: 256 }, (_, i) => i);
  // most frequent first, so they get the lowest priority
  order.sort((a, b) => (counts[b] ?? 0) - (counts[a] ?? 0) || a - b);
  const priority = new Uint8Array(256);
  order.forEach((index, rank) => (priority[index] = rank));
  return priority;
}

/** Mode of four indices under the tie rule above. */
export function mode4(a: number, b: number, c: number, d: number, priority: Uint8Array): number {
  if (a === b && b === c && c === d) return a;
  const na = 1 + (a === b ? 1 : 0) + (a === c ? 1 : 0) + (a === d ? 1 : 0);
  const nb = 1 + (b === a ? 1 : 0) + (b === c ? 1 : 0) + (b === d ? 1 : 0);
  const nc = 1 + (c === a ? 1 : 0) + (c === b ? 1 : 0) + (c === d ? 1 : 0);
  const nd = 1 + (d === a ? 1 : 0) + (d === b ? 1 : 0) + (d === c ? 1 : 0);
  let best = a;
  let bestN = na;
  if (nb > bestN || (nb === bestN && priority[b] > priority[best])) (best = b), (bestN = nb);
  if (nc > bestN || (nc === bestN && priority[c] > priority[best])) (best = c), (bestN = nc);
  if (nd > bestN || (nd === bestN && priority[d] > priority[best])) (best = d), (bestN = nd);
  return best;
}

/**
 * Reduce a width×height index image by 2 in each direction, writing the ceil(width/2)×ceil(height/2)
 * result into `out` (row stride outStride) at (ox, oy). Missing pixels at odd edges simply do not vote.
 */
export function reduce2x2Into(
  src: Uint8Array,
  width: number,
  height: number,
  priority: Uint8Array,
  out: Uint8Array,
  outStride: number,
  ox = 0,
  oy = 0,
): void {
  const ow = (width + 1) >> 1;
  const oh = (height + 1) >> 1;
  for (let y = 0; y < oh; y++) {
    const r0 = 2 * y * width;
    const hasR1 = 2 * y + 1 < height;
    const r1 = hasR1 ? r0 + width : r0;
    const dst = (oy + y) * outStride + ox;
    for (let x = 0; x < ow; x++) {
      const c0 = 2 * x;
      const hasC1 = c0 + 1 < width;
      const a = src[r0 + c0];
      const b = hasC1 ? src[r0 + c0 + 1] : -1;
      const c = hasR1 ? src[r1 + c0] : -1;
      const d = hasR1 && hasC1 ? src[r1 + c0 + 1] : -1;
      out[dst + x] = b < 0 && c < 0 ? a : modeOf(a, b, c, d, priority);
    }
  }
}

/** mode4 where -1 marks a missing pixel. */
function modeOf(a: number, b: number, c: number, d: number, priority: Uint8Array): number {
  if (b >= 0 && c >= 0) return mode4(a, b, c, d, priority);
  // an edge block of two pixels: equal, or a tie decided by priority
  const e = b >= 0 ? b : c;
  return a === e || priority[a] > priority[e] ? a : e;
}

/** Convenience form returning a new image. */
export function reduce2x2(src: Uint8Array, width: number, height: number, priority: Uint8Array): { data: Uint8Array; width: number; height: number } {
  const ow = (width + 1) >> 1;
  const oh = (height + 1) >> 1;
  const data = new Uint8Array(ow * oh);
  reduce2x2Into(src, width, height, priority, data, ow);
  return { data, width: ow, height: oh };
}
