/**
 * A small exact pile for the landing page, computed in the browser: n grains at the origin of Z^2,
 * toppled until every site holds fewer than 4. Sized so it finishes in a few milliseconds; the real
 * engine lives in renderer/.
 */
export interface HeroPile {
  /** side of the square grid, odd, origin in the centre */
  size: number;
  heights: Uint8Array;
  toppled: Uint8Array;
  /** total number of single topplings */
  topplings: number;
}

export function stabiliseSquare(n: number, size: number): HeroPile {
  const h = new Int32Array(size * size);
  const toppled = new Uint8Array(size * size);
  const c = (size >> 1) * size + (size >> 1);
  h[c] = n;
  const stack: number[] = [c];
  let topplings = 0;
  while (stack.length) {
    const i = stack.pop()!;
    if (h[i]! < 4) continue;
    // Fire as many times as the site allows at once; the abelian property makes the order irrelevant.
    const times = Math.floor(h[i]! / 4);
    h[i]! -= 4 * times;
    topplings += times;
    toppled[i] = 1;
    const x = i % size;
    const y = (i - x) / size;
    if (x === 0 || y === 0 || x === size - 1 || y === size - 1) throw new Error('pile reached the edge of the grid');
    for (const j of [i - 1, i + 1, i - size, i + size]) {
      h[j]! += times;
      if (h[j]! >= 4) stack.push(j);
    }
  }
  return { size, heights: Uint8Array.from(h), toppled, topplings };
}
