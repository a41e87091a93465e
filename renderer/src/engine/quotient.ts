/**
 * Reachability on the quotient of a periodic graph (nodes = residue classes, edges carry their real
 * offsets). From a start node, infinitely many sites are reachable iff the start reaches a strongly
 * connected component with a closed walk of non-zero displacement, found as an edge whose offset
 * disagrees with potentials spread inside the component (Kosaraju for the components).
 */
export function reachesInfinity(start: number, edges: (node: number) => readonly { to: number; off: readonly number[] }[]): boolean {
  // nodes reachable from start, numbered in discovery order
  const index = new Map<number, number>([[start, 0]]);
  const nodes = [start];
  const out: { to: number; off: readonly number[] }[][] = [];
  for (let k = 0; k < nodes.length; k++) {
    const list = edges(nodes[k]!).map((e) => {
      let j = index.get(e.to);
      if (j === undefined) ((j = nodes.length), index.set(e.to, j), nodes.push(e.to));
      return { to: j, off: e.off };
    });
    out.push(list);
  }
  const n = nodes.length;
  const inn: number[][] = Array.from({ length: n }, () => []);
  out.forEach((l, v) => l.forEach((e) => inn[e.to]!.push(v)));
  const order: number[] = [];
  const seen = new Uint8Array(n);
  for (let s = 0; s < n; s++) {
    if (seen[s]) continue;
    seen[s] = 1;
    const stack: [number, number][] = [[s, 0]];
    while (stack.length) {
      const top = stack[stack.length - 1]!;
      if (top[1] < out[top[0]]!.length) {
        const w = out[top[0]]![top[1]++]!.to;
        if (!seen[w]) ((seen[w] = 1), stack.push([w, 0]));
      } else order.push(stack.pop()![0]);
    }
  }
  const comp = new Int32Array(n).fill(-1);
  let c = 0;
  for (let k = n - 1; k >= 0; k--) {
    const s = order[k]!;
    if (comp[s] !== -1) continue;
    comp[s] = c;
    const stack = [s];
    while (stack.length) for (const w of inn[stack.pop()!]!) if (comp[w] === -1) ((comp[w] = c), stack.push(w));
    c++;
  }
  const pot: (number[] | undefined)[] = new Array(n);
  for (let s = 0; s < n; s++) {
    if (pot[s]) continue;
    pot[s] = [0, 0, 0];
    const stack = [s];
    while (stack.length) {
      const v = stack.pop()!;
      for (const e of out[v]!) {
        if (comp[e.to] !== comp[v]) continue;
        const p = pot[v]!.map((a, i) => a + (e.off[i] ?? 0));
        const q = pot[e.to];
        if (!q) ((pot[e.to] = p), stack.push(e.to));
        else if (q.some((a, i) => a !== p[i])) return true;
      }
    }
  }
  return false;
}
