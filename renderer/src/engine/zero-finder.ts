/**
 * The sites of height 0 of a line's working box, in a Fenwick tree (binary indexed tree) of 0/1
 * indicators, so the nearest zero on either side of a site is found in O(log L) and a site changes
 * between 0 and 1 in O(log L). The line path (line-path.ts) asks for both once per grain that
 * topples; a plain scan would cost the length of the run of ones, which is the whole pile for a
 * single source.
 */
export class ZeroFinder {
  private readonly tree: Int32Array;
  /** highest power of two not above the length: where the descent of `kth` starts */
  private readonly top: number;
  private count = 0;

  /** Indexes the zeros of `h` (any height other than 0 counts as not a zero). */
  constructor(h: Int32Array) {
    const n = h.length;
    const tree = new Int32Array(n + 1);
    // linear-time build: each node passes its sum on to its parent once
    for (let i = 1; i <= n; i++) {
      if (h[i - 1] === 0) ((tree[i] = tree[i]! + 1), this.count++);
      const p = i + (i & -i);
      if (p <= n) tree[p] = tree[p]! + tree[i]!;
    }
    this.tree = tree;
    let top = 1;
    while (top * 2 <= n) top *= 2;
    this.top = n === 0 ? 0 : top;
  }

  /** Site i became a zero (+1) or stopped being one (−1). */
  add(i: number, d: 1 | -1): void {
    const t = this.tree, n = t.length - 1;
    for (let k = i + 1; k <= n; k += k & -k) t[k] = t[k]! + d;
    this.count += d;
  }

  /** Number of zeros among sites 0 .. i−1. */
  before(i: number): number {
    const t = this.tree;
    let s = 0;
    for (let k = i; k > 0; k -= k & -k) s += t[k]!;
    return s;
  }

  /** Index of the k-th zero from the left (k from 0); the caller keeps k below the number of zeros. */
  kth(k: number): number {
    const t = this.tree, n = t.length - 1;
    let pos = 0;
    let rest = k + 1;
    for (let step = this.top; step > 0; step >>= 1) {
      const next = pos + step;
      if (next <= n && t[next]! < rest) ((pos = next), (rest -= t[next]!));
    }
    return pos;
  }

  /** Number of zeros in the box. */
  get zeros(): number {
    return this.count;
  }
}
