import type { LatticeGraph } from '../engine/lattice.js';

/**
 * The effective diffusion matrix A of a periodic planar lattice's continuum limit, as [a, b, c] for
 * a ∂xx + 2b ∂xy + c ∂yy. With one class it is ½ Σ_e e eᵀ. With several, the walk's steps are
 * correlated through the classes, and the plain average of ½ e eᵀ over classes is only an upper
 * bound (it overstated the honeycomb's and the Manhattan lattice's peak at the source, measured). The
 * homogenized matrix comes from the corrector χ on the classes, Lχ = −b with b_c = Σ_e e the drift of
 * class c, then A = E_π[½ Σ_e (e + χ(c+e) − χ(c))(e + χ(c+e) − χ(c))ᵀ] (the martingale central limit
 * theorem for periodic walks; common practice in periodic homogenization). π is uniform when every
 * class has as many in- as out-edges (every preset); other graphs, or a drift that does not average
 * to zero, keep the plain average.
 */
export function effectiveDiffusion(g: LatticeGraph): [number, number, number] {
  const [px, py] = g.period;
  const nc = g.classes.length;
  const mod = (a: number, m: number) => ((a % m) + m) % m;
  const target = (c: number, o: readonly number[]) => {
    const cx = c % px, cy = (c - cx) / px;
    return mod(cy + o[1]!, py) * px + mod(cx + o[0]!, px);
  };
  const plain = (): [number, number, number] => {
    let a = 0, b = 0, c = 0;
    for (const cls of g.classes) for (const o of cls) ((a += o[0] * o[0]), (b += o[0] * o[1]), (c += o[1] * o[1]));
    return [a / (2 * nc), b / (2 * nc), c / (2 * nc)];
  };
  if (nc === 1) return plain();
  const indeg = new Array<number>(nc).fill(0);
  let bx = 0, by = 0;
  for (let c = 0; c < nc; c++) for (const o of g.classes[c]!) ((indeg[target(c, o)]! += 1), (bx += o[0]), (by += o[1]));
  if (g.classes.some((cl, c) => cl.length !== indeg[c]) || bx !== 0 || by !== 0) return plain();
  // M χ = −b, M[c][t] = edges c→t, M[c][c] −= deg; equation 0 replaced by χ_0 = 0 (M has rank nc − 1)
  const M = Array.from({ length: nc }, () => new Float64Array(nc + 2));
  for (let c = 0; c < nc; c++) {
    const row = M[c]!;
    for (const o of g.classes[c]!) {
      row[target(c, o)]! += 1;
      row[c]! -= 1;
      row[nc]! -= o[0];
      row[nc + 1]! -= o[1];
    }
  }
  M[0]!.fill(0);
  M[0]![0] = 1;
  const chi = solve(M, nc);
  if (!chi) return plain();
  let a = 0, b = 0, c = 0;
  for (let k = 0; k < nc; k++)
    for (const o of g.classes[k]!) {
      const t = target(k, o);
      const ex = o[0] + chi[t]![0]! - chi[k]![0]!, ey = o[1] + chi[t]![1]! - chi[k]![1]!;
      ((a += ex * ex), (b += ex * ey), (c += ey * ey));
    }
  return [a / (2 * nc), b / (2 * nc), c / (2 * nc)];
}

/** Gaussian elimination with partial pivoting on [M | two right-hand sides]; null when singular. */
function solve(M: Float64Array[], n: number): [number, number][] | null {
  for (let col = 0; col < n; col++) {
    let piv = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(M[r]![col]!) > Math.abs(M[piv]![col]!)) piv = r;
    if (Math.abs(M[piv]![col]!) < 1e-12) return null;
    [M[col], M[piv]] = [M[piv]!, M[col]!];
    const p = M[col]!;
    for (let r = 0; r < n; r++) {
      if (r === col) continue;
      const q = M[r]!, f = q[col]! / p[col]!;
      if (f !== 0) for (let k = col; k < n + 2; k++) q[k]! -= f * p[k]!;
    }
  }
  return M.map((row, r) => [row[n]! / row[r]!, row[n + 1]! / row[r]!] as [number, number]);
}
