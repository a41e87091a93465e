/**
 * Portable counter-based generator for i.i.d. backgrounds.
 *
 * The value at a site depends only on (seed, x, y, z), never on visiting order, so a tile computed on
 * any thread, machine or browser gets the same heights. Algorithm (all 32-bit integer operations,
 * Math.imul and >>> only, so JavaScript engines agree bit for bit):
 *
 *   fmix(h)  = murmur3 finaliser: h ^= h>>>16; h *= 0x85ebca6b; h ^= h>>>13; h *= 0xc2b2ae35; h ^= h>>>16
 *   h = fmix(seed ^ 0x9e3779b9)
 *   h = fmix(h ^ (x * 0x9e3779b1));  h = fmix(h ^ (y * 0x85ebca77));  h = fmix(h ^ (z * 0xc2b2ae3d))
 *
 * (multiplications mod 2^32, x,y,z taken as 32-bit two's complement). The unsigned result u in
 * [0, 2^32) selects height i when T[i-1] <= u < T[i], with thresholds T[i] = floor(2^32 * (w0+..+wi) / W)
 * computed in IEEE double arithmetic (deterministic everywhere) and T[last] = 2^32.
 */

export function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

export function siteHash(seed: number, x: number, y: number, z: number): number {
  let h = fmix32((seed ^ 0x9e3779b9) >>> 0);
  h = fmix32((h ^ Math.imul(x, 0x9e3779b1)) >>> 0);
  h = fmix32((h ^ Math.imul(y, 0x85ebca77)) >>> 0);
  h = fmix32((h ^ Math.imul(z, 0xc2b2ae3d)) >>> 0);
  return h;
}

/** Integer thresholds over [0, 2^32] from non-negative weights (see the algorithm above). */
export function weightThresholds(weights: readonly number[]): Float64Array {
  const total = weights.reduce((a, b) => a + b, 0);
  const t = new Float64Array(weights.length);
  let acc = 0;
  for (let i = 0; i < weights.length; i++) {
    acc += weights[i]!;
    t[i] = i === weights.length - 1 ? 2 ** 32 : Math.floor((2 ** 32 * acc) / total);
  }
  return t;
}

export function pickHeight(thresholds: Float64Array, u: number): number {
  let i = 0;
  while (u >= thresholds[i]!) i++;
  return i;
}
