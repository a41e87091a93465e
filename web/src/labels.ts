import type { Background, RunSpec, RunStatus } from './api/contract.js';
import { LAYERS, paletteById, type Layer } from '../../shared/palettes.js';
import { DEFAULT_RENDER, layerHasMaskedCells } from '../../shared/run-spec.js';

/** The one word for each state of a run: badges, filters, progress bars and headings all say it. */
const RUN_STATUS_WORDS: Record<RunStatus, string> = {
  queued: 'waiting',
  computing: 'toppling',
  rendering: 'drawing',
  finished: 'finished',
  failed: 'failed',
  cancelled: 'cancelled',
};

export function runStatusWord(s: RunStatus): string {
  return RUN_STATUS_WORDS[s];
}

/**
 * The moment a run ended, named by how it ended: a run stopped by its author or refused by the
 * engine was "cancelled" or "failed" at that time, not "finished". Before it ends: when it started.
 */
export function runEndedText(run: { status: RunStatus; startedAt: string | null; finishedAt: string | null }, when: (iso: string) => string): string {
  if (run.finishedAt) return `${run.status === 'failed' || run.status === 'cancelled' ? RUN_STATUS_WORDS[run.status] : RUN_STATUS_WORDS.finished} ${when(run.finishedAt)}`;
  return run.startedAt ? `started ${when(run.startedAt)}` : '';
}

/** The same word at the head of a section or notice: "Finished". */
export function runStatusHeading(s: RunStatus): string {
  const w = RUN_STATUS_WORDS[s];
  return w[0]!.toUpperCase() + w.slice(1);
}

// lattices are named in shared/ (the API's mails say the same names)
export { capitalized, latticeName, latticeOfSpec } from '../../shared/lattice-names.js';

/** Names of backgrounds as people in the trade say them. */
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

/** Motifs of at most this many cells are written out; larger ones by their size alone. */
const MOTIF_CELLS_WRITTEN = 16;
/** Random backgrounds over at most this many heights list their weights. */
const WEIGHTS_WRITTEN = 8;
const weightFormat = new Intl.NumberFormat('en-US', { maximumSignificantDigits: 4 });

/**
 * One short line with the parameters that define the background, e.g. "constant 2",
 * "checkerboard 3 / 1", "periodic motif 2×2 [0 1; 2 3]" or "random i.i.d. 0–2, weights 1 : 2 : 1, seed 7".
 */
export function backgroundOfSpec(b: Background): string {
  switch (b.kind) {
    case 'constant':
      return `constant ${b.height}`;
    case 'checkerboard':
      return `checkerboard ${b.a} / ${b.b}`;
    case 'motif': {
      const size = `${b.cells[0]?.length ?? 0}×${b.cells.length}`;
      const count = b.cells.reduce((n, row) => n + row.length, 0);
      return count <= MOTIF_CELLS_WRITTEN ? `periodic motif ${size} [${b.cells.map((row) => row.join(' ')).join('; ')}]` : `periodic motif ${size}`;
    }
    case 'random': {
      const top = b.weights.length - 1;
      const heights = top === 0 ? 'heights 0' : `heights 0–${top}`;
      const weights = b.weights.length > 1 && b.weights.length <= WEIGHTS_WRITTEN ? `, weights ${b.weights.map((w) => weightFormat.format(w)).join(' : ')}` : '';
      return `random i.i.d. ${heights}${weights}, seed ${b.seed}`;
    }
    case 'annuli':
      return `annuli ${b.a} / ${b.b}`;
    case 'array':
      // the content hash names the upload; its first digits are enough to tell two apart
      return `uploaded array ${b.shape.join('×')}, sha256 ${b.sha256.slice(0, 8)}…`;
  }
}

/** Point sources beyond the origin, counted for the spec summary. */
export function extraSources(spec: RunSpec): number {
  return spec.sources?.length ?? 0;
}

/** Every layer the farm can draw (shared/palettes.ts); which ones a run has is its spec's `render`. */
export const DRAWN_LAYERS = LAYERS;
export type DrawnLayer = Layer;
export const LAYER_LABELS: Record<Layer, string> = { heights: 'Heights', toppled: 'Toppled sites', difference: 'Difference', odometer: 'Odometer (log)' };
/** One line on each layer for the run form. */
export const LAYER_HINTS: Record<Layer, string> = {
  heights: 'final height of every site',
  toppled: 'heights only where a site toppled',
  difference: 'final height minus the initial one (needs a background that is not 0 everywhere)',
  odometer: 'how often each site toppled, on a log scale',
};

/** One line on what a run draws, e.g. "heights, difference · Kiln, Newsprint · untoppled see-through". */
export function drawingOfSpec(spec: RunSpec): string {
  const r = spec.render ?? DEFAULT_RENDER;
  const masked = r.layers.some(layerHasMaskedCells);
  return [
    r.layers.map((l) => LAYER_LABELS[l].toLowerCase()).join(', '),
    r.palettes.map((p) => paletteById(p).name).join(', '),
    ...(masked ? [`untoppled ${r.untoppled === 'transparent' ? 'see-through' : 'grey'}`] : []),
  ].join(' · ');
}
