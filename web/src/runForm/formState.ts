import type { Background, PeriodicGraph, RunSpec } from '../api/contract.js';
import type { LatticeChoice } from '../../../shared/run-spec.js';
import { CHIPS_TOO_LARGE_MESSAGE, DEFAULT_RENDER, MAX_CHIPS, type RenderSpec } from '../../../shared/run-spec.js';
import { LAYERS, PALETTE_IDS, type Layer, type PaletteId, type UntoppledStyle } from '../../../shared/palettes.js';
import { PERIODIC_PRESETS } from '../../../renderer/src/engine/lattice.js';
import { scaleSymbol } from '../../../shared/natural-scale.js';
import { latticeShape } from '../../../shared/stability.js';

/**
 * The run form's state as the author types it (strings where people type numbers), and the two
 * directions between it and a run specification: `specOfForm` for submitting and estimating,
 * `formOfSpec` for "duplicate with edits". Pure, so both directions are tested without a browser.
 */

export const BUILTIN_PRESETS = ['line', 'square', 'cubic', 'triangular', 'honeycomb'] as const;
/** Periodic presets of the engine (renderer/src/engine/lattice.ts), sent as their unit cell so every part of the product can read them. */
export const PERIODIC_PRESET_NAMES = Object.keys(PERIODIC_PRESETS);

export type LatticeMode = 'preset' | 'cell';
export type BackgroundKind = Background['kind'];
export const BACKGROUND_KINDS: readonly BackgroundKind[] = ['constant', 'checkerboard', 'motif', 'random', 'annuli', 'array'];

export interface SourceRow {
  at: string;
  chips: string;
}

export interface RunFormState {
  title: string;
  latticeMode: LatticeMode;
  preset: string;
  cell: PeriodicGraph;
  cellName: string;
  /** "single": one run of n grains; "series": one run per grain count, side by side by √n */
  mode: 'single' | 'series';
  chips: string;
  seriesChips: string;
  backgroundKind: BackgroundKind;
  height: string;
  a: string;
  b: string;
  motif: string;
  seed: string;
  weights: string;
  upload: { sha256: string; shape: number[] } | null;
  sources: SourceRow[];
  /** what the farm draws: each checked layer in each checked palette */
  layers: Layer[];
  palettes: PaletteId[];
  untoppled: UntoppledStyle;
}

export const SQUARE_CELL: PeriodicGraph = { period: [1, 1], neighbours: [[[[1, 0], [-1, 0], [0, 1], [0, -1]]]] };

export function emptyForm(): RunFormState {
  return {
    title: '',
    latticeMode: 'preset',
    preset: 'square',
    cell: SQUARE_CELL,
    cellName: '',
    mode: 'single',
    chips: '1000000',
    seriesChips: '10^4, 10^5, 10^6',
    backgroundKind: 'constant',
    height: '0',
    a: '2',
    b: '1',
    motif: '2 1\n1 2',
    seed: '1',
    weights: '1 1 1',
    upload: null,
    sources: [],
    layers: [...DEFAULT_RENDER.layers],
    palettes: [...DEFAULT_RENDER.palettes],
    untoppled: DEFAULT_RENDER.untoppled,
  };
}

/** Numbers may be typed with grouping ("1,000,000") or as a power of ten ("10^6", "2.5×10^6", "1e6"). */
export function parseGrains(raw: string): number {
  const s = raw.trim().replace(/[,_\s]/g, '');
  const pow = /^(\d+(?:\.\d+)?)?(?:\*|x|×)?10\^(\d+)$/.exec(s);
  if (pow) return Math.round(Number(pow[1] ?? 1) * 10 ** Number(pow[2]));
  return s === '' ? NaN : Number(s);
}

const int = (s: string) => (s.trim() === '' ? NaN : Number(s.trim()));
const list = (s: string) => s.split(/[\s,;]+/).filter(Boolean).map(Number);

/** Rows of a motif typed as lines of numbers ("2 1\n1 2"). */
export function parseMotif(text: string): number[][] {
  return text
    .split('\n')
    .map((l) => l.trim())
    .filter(Boolean)
    .map(list);
}

export function backgroundOfForm(f: RunFormState): unknown {
  switch (f.backgroundKind) {
    case 'constant':
      return { kind: 'constant', height: int(f.height) };
    case 'checkerboard':
      return { kind: 'checkerboard', a: int(f.a), b: int(f.b) };
    case 'annuli':
      return { kind: 'annuli', a: int(f.a), b: int(f.b) };
    case 'motif':
      return { kind: 'motif', cells: parseMotif(f.motif) };
    case 'random':
      return { kind: 'random', seed: int(f.seed), weights: list(f.weights) };
    case 'array':
      return f.upload ? { kind: 'array', sha256: f.upload.sha256, shape: f.upload.shape } : { kind: 'array' };
  }
}

export function latticeOfForm(f: RunFormState): unknown {
  if (f.latticeMode === 'preset') {
    const periodic = PERIODIC_PRESETS[f.preset];
    return periodic ? { periodic: { period: periodic.period, neighbours: periodic.neighbours }, name: f.preset } : { preset: f.preset };
  }
  return f.cellName.trim() ? { periodic: f.cell, name: f.cellName.trim() } : { periodic: f.cell };
}

/** The dimension of the form's lattice: 1 for the line, 3 for the cubic lattice, 2 otherwise (unit cells are planar). */
export function dimensionOfForm(f: Pick<RunFormState, 'latticeMode' | 'preset'>): 1 | 2 | 3 {
  try {
    if (f.latticeMode === 'preset') return latticeShape({ preset: f.preset } as LatticeChoice).dimension;
  } catch {
    // an unknown preset is refused by the form's own check; the wording stays planar meanwhile
  }
  return 2;
}

/**
 * What a series of the form's lattice looks like on the series page, which rescales each pile by its
 * own n^(1/d): "n" on the line, "√n" on the plane, "∛n" on the cubic lattice.
 */
export function seriesScaleHint(f: Pick<RunFormState, 'latticeMode' | 'preset'>): string {
  return `one run per n, side by side, each rescaled by ${scaleSymbol(dimensionOfForm(f))}`;
}

/**
 * How a motif is typed on a lattice of each dimension (the engine reads cells[y mod rows][x mod cols],
 * a line only row 0, the cubic lattice the same rows on every layer z), and a note when the text has
 * rows the lattice does not read.
 */
export function motifWording(dimension: 1 | 2 | 3, text: string): { label: string; note?: string } {
  if (dimension === 1) {
    const rows = parseMotif(text).length;
    return {
      label: 'Motif: heights along the line (x mod their number), separated by spaces',
      note: rows > 1 ? `the line repeats the first row only; the other ${rows - 1 === 1 ? 'row is' : `${rows - 1} rows are`} not used` : undefined,
    };
  }
  const label = 'Motif: one line per row (y mod rows), heights separated by spaces';
  return dimension === 3 ? { label: `${label}; the same on every layer z` } : { label };
}

/**
 * The hint under the grain count while it is not a count a run can have (null once it is): the
 * largest accepted count, with its reason, for one too large ("1e20" is a number, just too big).
 */
export function grainCountHint(n: number): string | null {
  if (Number.isSafeInteger(n) && n >= 1) return null;
  if (n > MAX_CHIPS) return CHIPS_TOO_LARGE_MESSAGE;
  return 'a whole number of at least 1, e.g. 1000000 or 10^6';
}

/** Coordinates typed as "3, -2" or "(3, -2)". */
export function parseAt(s: string): number[] {
  return s.replace(/[()]/g, '').split(/[\s,;]+/).filter(Boolean).map(Number);
}

/** Layers and palettes in their canonical order, whatever order they were ticked in. */
export function renderOfForm(f: Pick<RunFormState, 'layers' | 'palettes' | 'untoppled'>): RenderSpec {
  return {
    layers: LAYERS.filter((l) => f.layers.includes(l)),
    palettes: PALETTE_IDS.filter((p) => f.palettes.includes(p)),
    untoppled: f.untoppled,
  };
}

const sameRender = (a: RenderSpec, b: RenderSpec) => JSON.stringify(a) === JSON.stringify(b);

/**
 * The specification as typed; not yet validated (the shared zod schema does that). The default
 * drawing is left out, so such a run's specification is the same as before layers could be chosen.
 */
export function specOfForm(f: RunFormState): Record<string, unknown> {
  const render = renderOfForm(f);
  return {
    lattice: latticeOfForm(f),
    chips: parseGrains(f.chips),
    sources: f.sources.map((s) => ({ at: parseAt(s.at), chips: parseGrains(s.chips) })),
    background: backgroundOfForm(f),
    ...(sameRender(render, DEFAULT_RENDER) ? {} : { render }),
  };
}

/** Tick or untick one item of a list, keeping the rest. */
export function toggled<T>(list: readonly T[], item: T): T[] {
  return list.includes(item) ? list.filter((x) => x !== item) : [...list, item];
}

/** Grain counts typed as "10^4, 10^5, 10^6" or "10000 100000"; NaN marks an entry that is not a number. */
export function parseGrainList(text: string): number[] {
  return text.split(/[;,]\s*|\s+(?=\d)/).map((s) => s.trim()).filter(Boolean).map(parseGrains);
}

export const seriesChipsOfForm = (f: RunFormState): number[] => parseGrainList(f.seriesChips);

/** The form prefilled from an existing run's specification ("duplicate with edits"). */
export function formOfSpec(spec: RunSpec, title: string): RunFormState {
  const f = emptyForm();
  f.title = title;
  f.chips = String(spec.chips);
  const l = spec.lattice;
  if ('preset' in l) {
    f.latticeMode = 'preset';
    f.preset = l.preset;
  } else if (l.name && PERIODIC_PRESETS[l.name] && JSON.stringify(PERIODIC_PRESETS[l.name]!.neighbours) === JSON.stringify(l.periodic.neighbours)) {
    f.latticeMode = 'preset';
    f.preset = l.name;
  } else {
    f.latticeMode = 'cell';
    f.cell = l.periodic;
    f.cellName = l.name ?? '';
  }
  const b = spec.background;
  f.backgroundKind = b.kind;
  switch (b.kind) {
    case 'constant':
      f.height = String(b.height);
      break;
    case 'checkerboard':
    case 'annuli':
      f.a = String(b.a);
      f.b = String(b.b);
      break;
    case 'motif':
      f.motif = b.cells.map((r) => r.join(' ')).join('\n');
      break;
    case 'random':
      f.seed = String(b.seed);
      f.weights = b.weights.join(' ');
      break;
    case 'array':
      f.upload = { sha256: b.sha256, shape: b.shape };
      break;
  }
  f.sources = spec.sources.map((s) => ({ at: s.at.join(', '), chips: String(s.chips) }));
  const render = spec.render ?? DEFAULT_RENDER;
  f.layers = [...render.layers];
  f.palettes = [...render.palettes];
  f.untoppled = render.untoppled;
  return f;
}

/** Toggle one outgoing offset of residue class (cx, cy) in a unit cell. */
export function toggleOffset(g: PeriodicGraph, cx: number, cy: number, dx: number, dy: number): PeriodicGraph {
  const neighbours = g.neighbours.map((row, y) =>
    row.map((offs, x) => {
      if (x !== cx || y !== cy) return offs;
      const has = offs.some(([a, b]) => a === dx && b === dy);
      return has ? offs.filter(([a, b]) => !(a === dx && b === dy)) : [...offs, [dx, dy] as [number, number]];
    }),
  );
  return { ...g, neighbours };
}

/** A new period; classes that still exist keep their offsets, new ones start with the square lattice's four. */
export function resizeCell(g: PeriodicGraph, px: number, py: number): PeriodicGraph {
  const neighbours = Array.from({ length: py }, (_, y) =>
    Array.from({ length: px }, (_, x) => g.neighbours[y]?.[x]?.map((o) => [o[0], o[1]] as [number, number]) ?? SQUARE_CELL.neighbours[0]![0]!.map((o) => [o[0], o[1]] as [number, number])),
  );
  return { period: [px, py], neighbours };
}

/** The error paths (as the schemas name them) that each form field's value decides. */
const ERROR_PATHS_OF: Record<keyof RunFormState, readonly string[]> = {
  title: ['title'],
  // the lattice sets the thresholds a background is judged against, so its errors go stale too
  latticeMode: ['spec.lattice', 'spec.background'],
  preset: ['spec.lattice', 'spec.background'],
  cell: ['spec.lattice', 'spec.background'],
  cellName: ['spec.lattice'],
  mode: ['spec.chips', 'seriesChips'],
  chips: ['spec.chips'],
  seriesChips: ['seriesChips'],
  backgroundKind: ['spec.background'],
  height: ['spec.background'],
  a: ['spec.background'],
  b: ['spec.background'],
  motif: ['spec.background'],
  seed: ['spec.background'],
  weights: ['spec.background'],
  upload: ['spec.background'],
  sources: ['spec.sources'],
  layers: ['spec.render'],
  palettes: ['spec.render'],
  untoppled: ['spec.render'],
};

/**
 * The errors of the last submit that still describe the form after an edit: an edited field's own
 * errors go (the author is fixing it; the next submit judges it again), the others stay.
 * @example errorsAfterEdit({ title: 'title is required', 'spec.chips': 'must be at least 1' }, { title: 'n = 10^6' }) // { 'spec.chips': … }
 */
export function errorsAfterEdit(errors: Record<string, string>, patch: Partial<RunFormState>): Record<string, string> {
  const stale = Object.keys(patch).flatMap((k) => ERROR_PATHS_OF[k as keyof RunFormState] ?? []);
  const kept = Object.entries(errors).filter(([path]) => !stale.some((p) => path === p || path.startsWith(`${p}.`)));
  return kept.length === Object.keys(errors).length ? errors : Object.fromEntries(kept);
}
