/**
 * Numbers behind the run and series plots, kept apart from the chart components so they can be
 * checked without a browser. Pure functions.
 */

export interface RadialProfileLike {
  binWidth: number;
  meanHeight: (number | null)[];
  sites: number[];
}

/** One point per non-empty bin, at the bin's centre in units of |x|/√n. */
export function radialPoints(p: RadialProfileLike): { r: number; meanHeight: number; sites: number }[] {
  const out: { r: number; meanHeight: number; sites: number }[] = [];
  p.meanHeight.forEach((h, i) => {
    if (h !== null && (p.sites[i] ?? 0) > 0) out.push({ r: (i + 0.5) * p.binWidth, meanHeight: h, sites: p.sites[i]! });
  });
  return out;
}

/** Toppled sites per final height, as bars. */
export function heightBars(heightCounts: readonly number[]): { height: string; sites: number }[] {
  return heightCounts.map((sites, h) => ({ height: String(h), sites }));
}

export interface RadiusPoint {
  n: number;
  radius: number;
}

/**
 * The constant c of the reference line r = c·√n that best fits the points on log-log axes (least
 * squares with the slope fixed at 1/2): log c is the mean of log r − ½ log n. Null without points.
 */
export function sqrtFit(points: readonly RadiusPoint[]): number | null {
  const ok = points.filter((p) => p.n > 0 && p.radius > 0);
  if (!ok.length) return null;
  const mean = ok.reduce((s, p) => s + Math.log(p.radius) - 0.5 * Math.log(p.n), 0) / ok.length;
  return Math.exp(mean);
}

/** Least-squares slope of log r against log n: close to 1/2 when the radius grows like √n. */
export function logLogSlope(points: readonly RadiusPoint[]): number | null {
  const ok = points.filter((p) => p.n > 0 && p.radius > 0);
  if (ok.length < 2) return null;
  const xs = ok.map((p) => Math.log(p.n));
  const ys = ok.map((p) => Math.log(p.radius));
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length;
  const my = ys.reduce((a, b) => a + b, 0) / ys.length;
  let sxy = 0;
  let sxx = 0;
  xs.forEach((x, i) => {
    sxy += (x - mx) * (ys[i]! - my);
    sxx += (x - mx) ** 2;
  });
  return sxx > 0 ? sxy / sxx : null;
}

/** Powers of ten spanning [lo, hi], for log-axis ticks. */
export function decadeTicks(lo: number, hi: number): number[] {
  const out: number[] = [];
  for (let e = Math.floor(Math.log10(lo)); e <= Math.ceil(Math.log10(hi)); e++) out.push(10 ** e);
  return out;
}
