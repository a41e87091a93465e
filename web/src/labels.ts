import type { Background, LatticeChoice, RunSpec } from './api/contract.js';

/** Names of lattices and backgrounds as people in the trade say them. */
const LATTICE_NAMES: Record<string, string> = {
  line: 'Z¹ (line)',
  square: 'Z² (square)',
  cubic: 'Z³ (cubic)',
  triangular: 'triangular',
  honeycomb: 'honeycomb',
  'f-lattice': 'F-lattice',
  manhattan: 'Manhattan lattice',
  periodic: 'periodic graph',
};

export function latticeName(key: string): string {
  return LATTICE_NAMES[key] ?? key;
}

export function latticeOfSpec(l: LatticeChoice): string {
  if ('preset' in l) return latticeName(l.preset);
  const [px, py] = l.periodic.period;
  return `${l.name ?? 'periodic graph'} (${px}×${py} cell)`;
}

const BACKGROUND_NAMES: Record<string, string> = {
  constant: 'constant',
  checkerboard: 'checkerboard',
  motif: 'periodic motif',
  random: 'random i.i.d.',
  annuli: 'annuli',
  array: 'uploaded array',
};

export function backgroundKindName(kind: string): string {
  return BACKGROUND_NAMES[kind] ?? kind;
}

/** One line describing the background, e.g. "checkerboard 3 / 1" or "random i.i.d., seed 7". */
export function backgroundOfSpec(b: Background): string {
  switch (b.kind) {
    case 'constant':
      return `constant ${b.height}`;
    case 'checkerboard':
      return `checkerboard ${b.a} / ${b.b}`;
    case 'motif':
      return `periodic motif ${b.cells[0]?.length ?? 0}×${b.cells.length}`;
    case 'random':
      return `random i.i.d., seed ${b.seed}`;
    case 'annuli':
      return `annuli ${b.a} / ${b.b}`;
    case 'array':
      return `uploaded array ${b.shape.join('×')}`;
  }
}

/** Point sources beyond the origin, counted for the spec summary. */
export function extraSources(spec: RunSpec): number {
  return spec.sources?.length ?? 0;
}

/** The layers the farm draws for every run (renderer/src/farm/render-run.ts DEFAULT_VIEWS). */
export const DRAWN_LAYERS = ['heights', 'toppled', 'odometer'] as const;
export type DrawnLayer = (typeof DRAWN_LAYERS)[number];
export const LAYER_LABELS: Record<DrawnLayer, string> = { heights: 'Heights', toppled: 'Toppled sites', odometer: 'Odometer' };
