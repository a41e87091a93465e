/**
 * Numbers behind the run and series plots, kept apart from the chart components so they can be
 * checked without a browser. Pure functions.
 */
import { naturalScale } from '../../../shared/natural-scale.js';

export interface RadialProfileLike {
  /** 'natural': binned by n^(1/d) (the worker since it stored the unit); 'sqrt-n' or absent: by √n */
  unit?: 'natural' | 'sqrt-n';
  binWidth: number;
  meanHeight: (number | null)[];
  sites: number[];
}

/** From the profile's own unit to n^(1/d): 1 for profiles binned by n^(1/d), √n/n^(1/d) for older ones binned by √n. */
function toNaturalUnit(p: RadialProfileLike, grains: number, dimension: number): number {
  if (p.unit === 'natural' || !(grains > 0)) return 1;
  return Math.sqrt(grains) / naturalScale(grains, dimension);
}

/**
 * One point per non-empty bin, at the bin's centre in units of |x|/n^(1/d). The worker bins by
 * |x|/n^(1/d) (renderer/src/analysis/radial-profile.ts); profiles it stored earlier were binned by
 * |x|/√n and are carried over to the pile's own length here.
 */
export function radialPoints(p: RadialProfileLike, grains = 0, dimension = 2): { r: number; meanHeight: number; sites: number }[] {
  const factor = toNaturalUnit(p, grains, dimension);
  const out: { r: number; meanHeight: number; sites: number }[] = [];
  p.meanHeight.forEach((h, i) => {
    if (h !== null && (p.sites[i] ?? 0) > 0) out.push({ r: (i + 0.5) * p.binWidth * factor, meanHeight: h, sites: p.sites[i]! });
  });
  return out;
}

/** Width of one bin in units of |x|/n^(1/d). */
export function radialBinWidth(p: RadialProfileLike, grains = 0, dimension = 2): number {
  return p.binWidth * toNaturalUnit(p, grains, dimension);
}

/** The smallest m × 10^k at least `raw`, m one of `multipliers` (ascending, below 10) or 10. */
export function niceStep(raw: number, multipliers: readonly number[]): number {
  const power = 10 ** Math.floor(Math.log10(raw));
  return ([...multipliers, 10].find((m) => m * power >= raw) ?? 10) * power;
}

/**
 * Evenly spaced round ticks from 0 to at least `end`: steps of 1, 2, 2.5 or 5 times a power of ten,
 * about `count` of them, with the decimals the step needs (no "8.20, 9.10" from rounding drift).
 */
export function niceTicks(end: number, count = 6): { ticks: number[]; decimals: number } {
  if (!(end > 0)) return { ticks: [0, 1], decimals: 0 };
  const step = niceStep(end / count, [1, 2, 2.5, 5]);
  const power = 10 ** Math.floor(Math.log10(step));
  const steps = Math.ceil(end / step - 1e-9);
  // decimals of the step itself: 0.25 needs two, 0.5 one, 20 none
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9) + (Math.abs(step / power - 2.5) < 1e-9 ? 1 : 0));
  const ticks = Array.from({ length: steps + 1 }, (_, i) => Number((i * step).toFixed(decimals)));
  return { ticks, decimals };
}

/**
 * Round ticks for the mean-height axis of a radial profile, from 0 to at least its highest point:
 * left to the chart library, a top of 3.7 gave 0.95, 1.9, 2.85.
 */
export function meanHeightTicks(points: readonly { meanHeight: number }[]): { ticks: number[]; decimals: number } {
  return niceTicks(Math.max(0, ...points.map((p) => p.meanHeight)), 4);
}

/**
 * Round ticks for the sites axis of the height bars, from 0 to at least the tallest bar: left to the
 * chart library, a tallest bar of 13,711 gave 3,500, 7,000, 10,500, 14,000.
 */
export function siteCountTicks(heightCounts: readonly number[]): number[] {
  return niceTicks(Math.max(0, ...heightCounts), 4).ticks;
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
 * The constant c of the reference line r = c·n^(1/d) that best fits the points on log-log axes (least
 * squares with the slope fixed at 1/d): log c is the mean of log r − (1/d) log n. Null without points.
 * The law holds for single-source piles of one dimension d (shared/natural-scale.ts), so points of
 * mixed dimensions must not be fitted together: see seriesDimension.
 */
export function naturalFit(points: readonly RadiusPoint[], dimension: number): number | null {
  const ok = points.filter((p) => p.n > 0 && p.radius > 0);
  if (!ok.length) return null;
  const mean = ok.reduce((s, p) => s + Math.log(p.radius) - Math.log(naturalScale(p.n, dimension)), 0) / ok.length;
  return Math.exp(mean);
}

/** The one lattice dimension of a set of runs, or the sorted distinct dimensions when they differ (none: null). */
export function seriesDimension(dimensions: readonly number[]): { kind: 'one'; dimension: number } | { kind: 'mixed'; dimensions: number[] } | null {
  const distinct = [...new Set(dimensions)].sort((a, b) => a - b);
  if (distinct.length === 0) return null;
  return distinct.length === 1 ? { kind: 'one', dimension: distinct[0]! } : { kind: 'mixed', dimensions: distinct };
}

/** Least-squares slope of log r against log n: close to 1/d when the radius grows like n^(1/d). */
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
