import type { Background, LatticeChoice, LatticePreset } from './run-spec.js';

/**
 * What a specification's lattice and background say about stabilization before anything is
 * computed: the degree (toppling threshold) of its sites, the mean and the lowest height of its
 * background, and from those the estimator's soft warning ("may never stabilize") and the certain
 * case that the new-run schema refuses. One module, so the form, the API and the estimator apply
 * the same numbers. Imports only types from run-spec.ts, which uses it at run time.
 */

export interface LatticeShape {
  dimension: 1 | 2 | 3;
  /** mean number of neighbours (the toppling threshold) */
  degree: number;
  /** the largest number of neighbours of any site class (equal to `degree` on every preset) */
  maxDegree: number;
}

const uniform = (dimension: 1 | 2 | 3, degree: number): LatticeShape => ({ dimension, degree, maxDegree: degree });

const PRESET_SHAPES: Record<LatticePreset, LatticeShape> = {
  line: uniform(1, 2),
  square: uniform(2, 4),
  cubic: uniform(3, 6),
  triangular: uniform(2, 6),
  // brick wall: every class has 3 neighbours (renderer/src/engine/lattice.ts)
  honeycomb: uniform(2, 3),
  // directed presets (renderer/src/engine/lattice.ts PERIODIC_PRESETS): out-degree 2 everywhere
  'f-lattice': uniform(2, 2),
  manhattan: uniform(2, 2),
};

/** Thrown for a specification the estimator cannot describe (an unknown lattice preset). */
export class EstimateError extends Error {
  override name = 'EstimateError';
}

export function latticeShape(lattice: LatticeChoice): LatticeShape {
  if ('preset' in lattice) {
    const shape = PRESET_SHAPES[lattice.preset as LatticePreset] as LatticeShape | undefined;
    if (!shape) throw new EstimateError(`unknown lattice preset "${lattice.preset}"; expected one of ${Object.keys(PRESET_SHAPES).join(', ')}`);
    return shape;
  }
  const classes = lattice.periodic.neighbours.flat();
  if (classes.length === 0) throw new EstimateError('the periodic lattice has no residue classes');
  const degree = classes.reduce((sum, offsets) => sum + offsets.length, 0) / classes.length;
  if (degree <= 0) throw new EstimateError('the periodic lattice has no edges');
  return { dimension: 2, degree, maxDegree: Math.max(...classes.map((offsets) => offsets.length)) };
}

/** What the estimator needs to know about an uploaded background (the API reads it from the upload record). */
export interface ArrayBackgroundInfo {
  shape: number[];
  meanHeight: number;
}

/** Mean background height h̄ of the specification (inside the array for an uploaded background). */
export function backgroundMean(bg: Background, upload?: ArrayBackgroundInfo): number {
  switch (bg.kind) {
    case 'constant':
      return bg.height;
    case 'checkerboard':
    case 'annuli':
      return (bg.a + bg.b) / 2;
    case 'motif': {
      const cells = bg.cells.flat();
      return cells.reduce((a, b) => a + b, 0) / cells.length;
    }
    case 'random': {
      const total = bg.weights.reduce((a, b) => a + b, 0);
      if (total <= 0) throw new EstimateError('random background: the weights add up to zero');
      return bg.weights.reduce((sum, w, h) => sum + w * h, 0) / total;
    }
    case 'array':
      return upload?.meanHeight ?? 0;
  }
}

/**
 * The lowest height the background puts on sites all over the lattice: every value of a
 * constant, checkerboard, motif or annuli background recurs without end, and so does (almost
 * surely) every height of positive weight of an i.i.d. background. An upload is 0 outside its
 * array. Undefined when the weights give no height at all.
 */
export function backgroundFloor(bg: Background): number | undefined {
  switch (bg.kind) {
    case 'constant':
      return bg.height;
    case 'checkerboard':
    case 'annuli':
      return Math.min(bg.a, bg.b);
    case 'motif':
      return Math.min(...bg.cells.flat());
    case 'random': {
      const h = bg.weights.findIndex((w) => w > 0);
      return h < 0 ? undefined : h;
    }
    case 'array':
      return 0;
  }
}

const round3 = (x: number) => Math.round(x * 1000) / 1000;

/**
 * The estimator's soft warning. Above deg − 2 (2d − 2 on Z^d) a pile need not stay compact
 * (Fey, Levine & Peres, arXiv:0901.3805): it may grow much faster or never stop, but it may also
 * stabilize, so the run is accepted.
 */
export function mayNotStabilizeWarning(mean: number, degree: number): string | undefined {
  return mean > degree - 2 ? `the mean background height ${round3(mean)} is above ${degree - 2}; the pile may grow much faster than expected or never stabilize` : undefined;
}

const BACKGROUND_PUTS: Record<Background['kind'], string> = {
  constant: 'this constant background puts',
  checkerboard: 'this checkerboard puts',
  motif: 'this motif puts',
  random: 'these weights put',
  annuli: 'these annuli put',
  array: 'this upload puts',
};

/**
 * Why a run on this lattice and background can never stabilize, whatever grains it gets, or
 * undefined when it might. The certain case: every site at least its threshold − 1. Then the
 * first site given a grain topples, each neighbour it feeds reaches its threshold and topples, and
 * so on: every site the source reaches topples, which on an infinite lattice is infinitely many,
 * so no finite array ever holds the result (common practice; the engine refuses the same runs,
 * renderer/src/engine/explosion.ts, and a few more that need the lattice's unit cell, such as an
 * infinite cluster of threshold − 1 sites through the source, which are left to it). Judged
 * against the largest threshold of any site class, so it never refuses a run that might stabilize.
 * @example neverStabilizesReason({ preset: 'square' }, { kind: 'constant', height: 3 }) // a reason
 */
export function neverStabilizesReason(lattice: LatticeChoice, bg: Background): string | undefined {
  let shape: LatticeShape;
  try {
    shape = latticeShape(lattice);
  } catch (err) {
    // an unknown lattice is refused elsewhere, with its own message
    if (err instanceof EstimateError) return undefined;
    throw err;
  }
  const floor = backgroundFloor(bg);
  const edge = shape.maxDegree - 1;
  if (floor === undefined || floor < edge) return undefined;
  if (edge < 1) return `every site of this lattice has at most one neighbour, so a grain is passed on for ever and no run on it can finish`;
  const threshold = shape.degree === shape.maxDegree ? `the toppling threshold ${shape.maxDegree} of every site of this lattice` : `${shape.maxDegree}, the largest toppling threshold of this lattice's sites`;
  const fix = edge === 1 ? 'use a background with some empty sites (height 0)' : `use a background with heights of at most ${edge - 1} on some sites`;
  const grains = `${floor} grain${floor === 1 ? '' : 's'}`;
  // at the threshold or above, every site is unstable before any grain is added: say so, not "one below"
  if (floor > edge) {
    return `${BACKGROUND_PUTS[bg.kind]} at least ${grains} on every site, at or above ${threshold}: every site topples from the start and the avalanche never stops, so the run could never finish; ${fix}`;
  }
  return (
    `${BACKGROUND_PUTS[bg.kind]} at least ${grains} on every site, and ${edge} is one below ${threshold}: ` +
    `the first grain makes every site topple in turn and the avalanche never stops, so the run could never finish; ${fix}`
  );
}
